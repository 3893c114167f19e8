#include "json_convert.hpp"

#include <cmath>
#include <limits>

#include "polewright/requirements/spec.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "requirements/json_reader.hpp"

namespace py = pybind11;

namespace pwpy {

namespace {

nlohmann::json convert(py::handle v, const std::string& path, int depth) {
  if (v.is_none()) return nullptr;
  if (py::isinstance<py::bool_>(v)) return v.cast<bool>();
  if (py::isinstance<py::int_>(v)) {
    // Outside 64 bits: a double, like the parser does with a long integer literal.
    int overflow = 0;
    const long long s = PyLong_AsLongLongAndOverflow(v.ptr(), &overflow);
    if (overflow == 0) {
      if (s >= 0) return static_cast<unsigned long long>(s);
      return s;
    }
    if (overflow > 0) {
      const unsigned long long u = PyLong_AsUnsignedLongLong(v.ptr());
      if (!PyErr_Occurred()) return u;
      PyErr_Clear();
    }
    const double d = PyLong_AsDouble(v.ptr());
    if (PyErr_Occurred()) {
      PyErr_Clear();
      throw pw::SpecError(path, "is an integer beyond the range of a double");
    }
    return d;
  }
  if (py::isinstance<py::float_>(v)) {
    const double d = v.cast<double>();
    if (!std::isfinite(d)) throw pw::SpecError(path, "must be a finite number (got " + py::repr(v).cast<std::string>() + ")");
    return d;
  }
  if (py::isinstance<py::str>(v)) return v.cast<std::string>();
  if (depth >= pw::kMaxNesting)
    throw pw::SpecError("$", "nesting deeper than " + std::to_string(pw::kMaxNesting) + " levels");
  if (py::isinstance<py::dict>(v)) {
    nlohmann::json o = nlohmann::json::object();
    for (auto item : py::reinterpret_borrow<py::dict>(v)) {
      if (!py::isinstance<py::str>(item.first))
        throw pw::SpecError(path, "has the key " + py::repr(item.first).cast<std::string>() + ": keys must be strings");
      const std::string key = item.first.cast<std::string>();
      o[key] = convert(item.second, pw::detail::key_path(path, key), depth + 1);
    }
    return o;
  }
  if (py::isinstance<py::list>(v) || py::isinstance<py::tuple>(v)) {
    nlohmann::json a = nlohmann::json::array();
    size_t i = 0;
    for (py::handle e : v) {
      a.push_back(convert(e, pw::detail::index_path(path, i), depth + 1));
      ++i;
    }
    return a;
  }
  // numpy scalars and arrays (and anything else with a plain-value tolist()).
  if (py::hasattr(v, "tolist") && !py::isinstance<py::bytes>(v)) {
    py::object plain = v.attr("tolist")();
    if (!plain.is(v)) return convert(plain, path, depth);
  }
  throw pw::SpecError(path, "is a Python " + py::str(py::type::of(v).attr("__name__")).cast<std::string>() +
                                ": expected a dict, list, str, number, bool or None");
}

template <class J>
py::object convert_back(const J& j) {
  switch (j.type()) {
    case nlohmann::json::value_t::null: return py::none();
    case nlohmann::json::value_t::boolean: return py::bool_(j.template get<bool>());
    case nlohmann::json::value_t::number_integer: return py::int_(j.template get<long long>());
    case nlohmann::json::value_t::number_unsigned: return py::int_(j.template get<unsigned long long>());
    case nlohmann::json::value_t::number_float: return py::float_(j.template get<double>());
    case nlohmann::json::value_t::string: return py::str(j.template get_ref<const std::string&>());
    case nlohmann::json::value_t::array: {
      py::list l(j.size());
      size_t i = 0;
      for (const auto& e : j) l[i++] = convert_back(e);
      return std::move(l);
    }
    case nlohmann::json::value_t::object: {
      py::dict d;
      for (auto it = j.begin(); it != j.end(); ++it) d[py::str(it.key())] = convert_back(it.value());
      return std::move(d);
    }
    default: return py::none();  // binary and discarded values never occur in our documents
  }
}

}  // namespace

nlohmann::json to_json(py::handle value, const std::string& path) { return convert(value, path, 0); }

nlohmann::json document_argument(py::handle value, const char* what) {
  if (py::isinstance<py::dict>(value)) return to_json(value);
  py::module_ os = py::module_::import("os");
  if (py::isinstance<py::str>(value) || py::isinstance(value, os.attr("PathLike"))) {
    const std::string path = py::str(os.attr("fsdecode")(value)).cast<std::string>();
    py::gil_scoped_release release;
    return pw::read_spec_file(path);  // a spec's measured data inlined, relative to its folder
  }
  throw py::type_error(std::string(what) + " must be a dict or a path (str or os.PathLike), not " +
                       py::str(py::type::of(value).attr("__name__")).cast<std::string>());
}

py::object to_python(const nlohmann::json& j) { return convert_back(j); }
py::object to_python(const nlohmann::ordered_json& j) { return convert_back(j); }

}  // namespace pwpy
