// The Python module `polewright`: check, design, retune, export, report and traces on the same
// library and JSON writers as the CLI, so a dict returned here equals the CLI's JSON for the same
// spec and seed.
#include <cmath>
#include <filesystem>
#include <limits>
#include <optional>
#include <string>

#include <pybind11/complex.h>
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>

#include "interruptible.hpp"
#include "json_convert.hpp"
#include "polewright/analysis/closed_loop.hpp"
#include "polewright/analysis/saturated.hpp"
#include "polewright/jobs/check.hpp"
#include "polewright/jobs/design.hpp"
#include "polewright/jobs/export.hpp"
#include "polewright/jobs/retune.hpp"
#include "outputs/atomic_file.hpp"
#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/export_output.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/outputs/report_sweep.hpp"
#include "polewright/outputs/retune_output.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "traces.hpp"

namespace py = pybind11;

namespace pwpy {

namespace {

PyObject* spec_error_type = nullptr;  // polewright.SpecError (owned by the module)

// An optional whole-number keyword argument within [lo, hi]; SpecError naming the argument.
std::optional<long long> whole_argument(const py::object& v, const char* name, long long lo, long long hi) {
  if (v.is_none()) return std::nullopt;
  if (py::isinstance<py::bool_>(v) || !py::isinstance<py::int_>(v))
    throw pw::SpecError(name, "must be a whole number (got " + py::repr(v).cast<std::string>() + ")");
  int overflow = 0;
  const long long x = PyLong_AsLongLongAndOverflow(v.ptr(), &overflow);
  if (overflow != 0 || x < lo || x > hi)
    throw pw::SpecError(name, "is " + py::repr(v).cast<std::string>() + ": expected " + std::to_string(lo) + ".." +
                                  std::to_string(hi));
  return x;
}

std::optional<double> number_argument(const py::object& v, const char* name) {
  if (v.is_none()) return std::nullopt;
  if (py::isinstance<py::bool_>(v) || !(py::isinstance<py::int_>(v) || py::isinstance<py::float_>(v)))
    throw pw::SpecError(name, "must be a number (got " + py::repr(v).cast<std::string>() + ")");
  const double x = v.cast<double>();
  if (!std::isfinite(x)) throw pw::SpecError(name, "must be a finite number");
  return x;
}

pw::Spec parse_spec_argument(const py::object& spec) {
  nlohmann::json doc = document_argument(spec, "spec");
  py::gil_scoped_release release;
  pw::inline_measured_files(doc, ".");  // a dict's measured files are relative to the working folder
  return pw::parse_spec(doc);
}

pw::ResultInput parse_result_argument(const py::object& result, const py::object& spec) {
  const nlohmann::json doc = document_argument(result, "result");
  std::optional<nlohmann::json> sdoc;
  if (!spec.is_none()) sdoc = document_argument(spec, "spec");
  py::gil_scoped_release release;
  if (sdoc) pw::inline_measured_files(*sdoc, ".");
  pw::ResultInput in = pw::parse_result(doc);
  if (sdoc) in.spec = pw::parse_spec(*sdoc);
  return in;
}

py::object check(const py::object& spec_arg, const py::object& compensator) {
  const pw::Spec spec = parse_spec_argument(spec_arg);
  pw::Zpk comp;
  if (!compensator.is_none()) {
    const nlohmann::json cdoc = document_argument(compensator, "compensator");
    comp = pw::parse_compensator(cdoc, "$");
  } else if (spec.current) {
    comp = *spec.current;
  } else {
    throw pw::SpecError("$.current", "is missing: give a current compensator or compensator=...");
  }
  nlohmann::json j;
  {
    py::gil_scoped_release release;
    j = pw::check_report_json(pw::run_check(spec, comp));
  }
  return to_python(j);
}

py::object design(const py::object& spec_arg, const py::object& seed, const py::object& threads,
                  const py::object& objective, const py::object& keep, bool timing) {
  const pw::Spec spec = parse_spec_argument(spec_arg);
  pw::DesignOptions o = pw::DesignOptions::FromSpec(spec);
  if (auto v = whole_argument(keep, "keep", 1, 100)) o.keep = static_cast<int>(*v);
  if (auto v = whole_argument(threads, "threads", 0, 1024)) o.threads = static_cast<int>(*v);
  if (auto v = whole_argument(seed, "seed", 0, std::numeric_limits<long long>::max()))
    o.seed = static_cast<unsigned long long>(*v);
  if (!objective.is_none()) {
    const std::string name = py::isinstance<py::str>(objective) ? objective.cast<std::string>() : "";
    bool known = false;
    for (pw::Objective ob : {pw::Objective::LeastEffort, pw::Objective::Fastest, pw::Objective::MostRobust,
                             pw::Objective::Simplest})
      if (name == pw::objective_name(ob)) {
        o.objective = ob;
        known = true;
      }
    if (!known)
      throw pw::SpecError("objective", "is " + py::repr(objective).cast<std::string>() +
                                           ": expected least_effort, fastest, most_robust or simplest");
  }
  std::string err;
  if (!o.IsValid(&err)) throw pw::SpecError("$.search", err);
  nlohmann::json j;
  run_interruptible([&](const std::atomic<bool>* cancel) {
    o.cancel = cancel;
    j = pw::design_report_json(pw::run_design(spec, o), timing);
  });
  return to_python(j);
}

py::object retune(const py::object& spec_arg, const py::object& seed, const py::object& threads,
                  const py::object& keep, bool allow_new_stages, bool timing) {
  const pw::Spec spec = parse_spec_argument(spec_arg);
  if (!spec.current) throw pw::SpecError("$.current", "is missing: retune needs the compensator in service");
  pw::RetuneOptions o = pw::RetuneOptions::FromSpec(spec);
  o.allow_new_stages = allow_new_stages;
  if (auto v = whole_argument(keep, "keep", 1, 100)) o.keep = static_cast<int>(*v);
  if (auto v = whole_argument(threads, "threads", 0, 1024)) o.threads = static_cast<int>(*v);
  if (auto v = whole_argument(seed, "seed", 0, std::numeric_limits<long long>::max()))
    o.seed = static_cast<unsigned long long>(*v);
  std::string err;
  if (!o.IsValid(&err)) throw pw::SpecError("$.search", err);
  nlohmann::json j;
  run_interruptible([&](const std::atomic<bool>* cancel) {
    o.cancel = cancel;
    j = pw::retune_report_json(pw::run_retune(spec, o), timing);
  });
  return to_python(j);
}

py::object export_(const py::object& result, const py::object& rank_arg, const py::object& sample_time,
                   const py::object& method, const py::object& prewarp, const py::object& compute_delay,
                   const py::object& spec) {
  // The spec's implementation block (embedded, or `spec`) gives the defaults, as on the command line.
  const int rank = static_cast<int>(whole_argument(rank_arg, "rank", 1, 1000000).value_or(1));
  const pw::ResultInput in = parse_result_argument(result, spec);
  const bool from_spec = in.spec && in.spec->implementation;
  pw::ExportOptions o = from_spec ? pw::ExportOptions::FromImplementation(*in.spec->implementation) : pw::ExportOptions{};
  if (const std::optional<double> t = number_argument(sample_time, "sample_time")) {
    if (!(*t > 0.0)) throw pw::SpecError("sample_time", "must be > 0");
    o.sample_time_s = *t;
  } else if (!from_spec) {
    throw pw::SpecError("sample_time", "is missing: give the sample time in seconds (the spec has no implementation block)");
  }
  if (!method.is_none()) {
    const std::string mname = py::isinstance<py::str>(method) ? method.cast<std::string>() : "";
    const auto m = pw::parse_discrete_method(mname);
    if (!m) throw pw::SpecError("method", "is " + py::repr(method).cast<std::string>() + ": expected tustin, prewarp, zoh or matched");
    if (*m != o.method) o.prewarp_rad_s.reset();
    o.method = *m;
  }
  if (const auto w = number_argument(prewarp, "prewarp_rad_s")) {
    if (o.method != pw::DiscreteMethod::Prewarp) throw pw::SpecError("prewarp_rad_s", "applies to method \"prewarp\" only");
    if (!(*w > 0.0)) throw pw::SpecError("prewarp_rad_s", "must be > 0");
    o.prewarp_rad_s = *w;
  }
  if (const auto d = number_argument(compute_delay, "compute_delay")) {
    if (!(*d >= 0.0 && *d <= pw::kMaxComputeDelaySamples)) throw pw::SpecError("compute_delay", "must be within 0..50 samples");
    o.compute_delay_samples = *d;
  }
  nlohmann::ordered_json j;
  {
    py::gil_scoped_release release;
    pw::result_compensator(in, rank);  // names the argument (rank) when out of range
    j = pw::export_json(pw::run_export(in, rank, o));
  }
  return to_python(j);
}

void report(const py::object& result, const py::object& path_arg) {
  py::module_ os = py::module_::import("os");
  const std::string path = py::str(os.attr("fsdecode")(path_arg)).cast<std::string>();
  std::string html;
  const bool sweep = (py::isinstance<py::str>(result) || py::isinstance(result, os.attr("PathLike"))) &&
                     std::filesystem::is_directory(py::str(os.attr("fsdecode")(result)).cast<std::string>());
  if (sweep) {
    const std::string dir = py::str(os.attr("fsdecode")(result)).cast<std::string>();
    py::gil_scoped_release release;
    html = pw::report_html(pw::prepare_sweep_report({dir}));
  } else {
    const pw::ResultInput in = parse_result_argument(result, py::none());
    py::gil_scoped_release release;
    html = pw::report_html(in);
  }
  try {
    py::gil_scoped_release release;
    pw::write_file_atomically(path, html);
  } catch (const std::runtime_error& e) {
    PyErr_SetString(PyExc_OSError, e.what());
    throw py::error_already_set();
  }
}

template <class T>
py::array_t<T> array_of(const std::vector<T>& v) {
  py::array_t<T> a(static_cast<py::ssize_t>(v.size()));
  std::copy(v.begin(), v.end(), a.mutable_data());
  return a;
}

py::dict traces(const py::object& result, const py::object& rank_arg, const py::object& spec) {
  const int rank = static_cast<int>(whole_argument(rank_arg, "rank", 1, 1000000).value_or(1));
  const pw::ResultInput in = parse_result_argument(result, spec);
  Traces t;
  {
    py::gil_scoped_release release;
    t = compute_traces(in, rank);
  }
  py::list plants;
  for (const PlantTraces& p : t.plants) {
    std::vector<double> time(p.y.size());
    for (size_t k = 0; k < time.size(); ++k) time[k] = static_cast<double>(k) * p.dt;
    py::dict d;
    d["name"] = p.name;
    d["stable"] = p.stable;
    d["time_s"] = array_of(time);
    d["y"] = array_of(p.y);
    d["u"] = array_of(p.u);
    d["loop"] = array_of(p.loop);
    plants.append(d);
  }
  py::dict out;
  out["rank"] = t.rank;
  out["frequency_rad_s"] = array_of(t.frequency_rad_s);
  out["plants"] = plants;
  return out;
}

// The loop of plant `plant` (0 = nominal) with a limited actuator, simulated from rest.
py::dict saturated_response(const py::object& spec_arg, const py::object& compensator, const py::object& minimum,
                            const py::object& maximum, const py::object& rate_limit, const py::object& anti_windup,
                            const py::object& tracking_time_s, const py::object& reference, const py::object& load,
                            const py::object& output, const py::object& initial_reference,
                            const py::object& horizon_s, const py::object& samples, const py::object& plant_arg) {
  const pw::Spec spec = parse_spec_argument(spec_arg);
  pw::Zpk comp;
  if (!compensator.is_none()) comp = pw::parse_compensator(document_argument(compensator, "compensator"), "$");
  else if (spec.current) comp = *spec.current;
  else throw pw::SpecError("$.current", "is missing: give a current compensator or compensator=...");
  // Unset arguments come from the spec's actuator block (when it has one).
  const std::optional<pw::ActuatorLimits>& own = spec.requirements.actuator;
  pw::ActuatorLimits lim = own.value_or(pw::ActuatorLimits{});
  auto limit = [&](const py::object& v, const char* name, double fallback) {
    if (v.is_none() && !own) throw pw::SpecError(name, "is required (the spec has no actuator block)");
    return v.is_none() ? fallback : *number_argument(v, name);
  };
  lim.minimum = limit(minimum, "minimum", lim.minimum);
  lim.maximum = limit(maximum, "maximum", lim.maximum);
  if (!rate_limit.is_none()) lim.rate_limit = number_argument(rate_limit, "rate_limit");
  if (!anti_windup.is_none()) {
    const std::string aw = py::isinstance<py::str>(anti_windup) ? anti_windup.cast<std::string>() : "";
    bool known = false;
    for (pw::AntiWindup a : {pw::AntiWindup::None, pw::AntiWindup::BackCalculation, pw::AntiWindup::Conditional})
      if (aw == pw::anti_windup_name(a)) {
        lim.anti_windup = a;
        known = true;
      }
    if (!known)
      throw pw::SpecError("anti_windup", "is " + py::repr(anti_windup).cast<std::string>() +
                                             ": expected none, back_calculation or conditional");
  }
  if (auto tt = number_argument(tracking_time_s, "tracking_time_s")) lim.tracking_time_s = *tt;
  pw::SaturatedInputs in;
  in.reference = number_argument(reference, "reference").value_or(spec.requirements.reference_step);
  in.load = number_argument(load, "load").value_or(0.0);
  in.output = number_argument(output, "output").value_or(0.0);
  in.initial_reference = number_argument(initial_reference, "initial_reference").value_or(0.0);
  pw::SaturatedOptions o;
  if (horizon_s.is_none()) throw pw::SpecError("horizon_s", "is required");
  o.horizon_s = *number_argument(horizon_s, "horizon_s");
  o.samples = static_cast<int>(whole_argument(samples, "samples", 3, 10000000).value_or(2001));
  const size_t index = static_cast<size_t>(
      whole_argument(plant_arg, "plant", 0, static_cast<long long>(spec.plants.size()) - 1).value_or(0));
  std::string err;
  if (!lim.IsValid(&err)) throw pw::SpecError("actuator", err);
  if (!o.IsValid(&err)) throw pw::SpecError("horizon_s", err);
  pw::SaturatedResponse r;
  try {
    py::gil_scoped_release release;
    const pw::LoopParts parts = pw::make_loop_parts(comp, spec.plants[index], spec.analysis.pade_order);
    r = pw::simulate_saturated(parts.compensator_tf, parts.plant, lim, in, o);
  } catch (const std::invalid_argument& e) {
    throw pw::SpecError("compensator", e.what());
  }
  std::vector<double> time(r.y.size());
  for (size_t k = 0; k < time.size(); ++k) time[k] = static_cast<double>(k) * r.dt;
  py::dict d;
  d["time_s"] = array_of(time);
  d["y"] = array_of(r.y);
  d["u"] = array_of(r.u);
  d["v"] = array_of(r.v);
  d["switch_times_s"] = array_of(r.switch_times_s);
  d["limited_time_s"] = r.limited_time_s;
  d["chattering"] = r.chattering;
  return d;
}

}  // namespace

}  // namespace pwpy

PYBIND11_MODULE(polewright, m) {
  using namespace pybind11::literals;
  m.doc() = "polewright: loop requirements in, ranked and verified compensators out (the CLI's engine in-process).";
  m.attr("__version__") = pw::kToolVersion;

  pwpy::spec_error_type = PyErr_NewExceptionWithDoc(
      "polewright.SpecError",
      "Bad input: the spec, result or argument named by `path` (a JSON path such as \"$.plant.poles[2]\", or the "
      "argument's name) is invalid.",
      PyExc_ValueError, nullptr);
  m.add_object("SpecError", py::handle(pwpy::spec_error_type));  // the module keeps the reference
  py::register_exception_translator([](std::exception_ptr p) {
    try {
      if (p) std::rethrow_exception(p);
    } catch (const pw::SpecError& e) {
      py::object err = py::reinterpret_borrow<py::object>(pwpy::spec_error_type)(e.what());
      err.attr("path") = e.path();
      PyErr_SetObject(pwpy::spec_error_type, err.ptr());
    }
  });

  m.def("check", &pwpy::check, "spec"_a, "compensator"_a = py::none(),
        "Check a compensator (default: the spec's `current`) against every requirement and plant.\n"
        "spec and compensator are dicts or paths to JSON files. Returns the check report (the CLI's "
        "`check --json` content) as dicts and lists.");
  m.def("design", &pwpy::design, "spec"_a, py::kw_only(), "seed"_a = py::none(), "threads"_a = py::none(),
        "objective"_a = py::none(), "keep"_a = py::none(), "timing"_a = false,
        "Search ranked, verified compensators. Keyword arguments override the spec's `search` settings "
        "(objective: least_effort, fastest, most_robust or simplest). Returns the CLI's `design --json` "
        "content. The GIL is released during the search; KeyboardInterrupt stops it.");
  m.def("retune", &pwpy::retune, "spec"_a, py::kw_only(), "seed"_a = py::none(), "threads"_a = py::none(),
        "keep"_a = py::none(), "allow_new_stages"_a = false, "timing"_a = false,
        "Move the compensator in service (the spec's `current`) as little as possible until it meets the "
        "requirements. Returns the CLI's `retune --json` content; KeyboardInterrupt stops the search.");
  m.def("export", &pwpy::export_, "result"_a, "rank"_a = 1, "sample_time"_a = py::none(), "method"_a = py::none(),
        py::kw_only(), "prewarp_rad_s"_a = py::none(), "compute_delay"_a = py::none(), "spec"_a = py::none(),
        "Discretise the compensator of rank `rank` of a result (dict or path) at `sample_time` seconds "
        "(method: tustin, prewarp, zoh or matched; computation delay in samples, a fraction allowed) and "
        "re-verify the sampled loop. Unset arguments come from the spec's implementation block, else "
        "tustin and no delay (sample_time is then required). Returns the CLI's "
        "`export --format json` content.");
  m.def("report", &pwpy::report, "result"_a, "path"_a,
        "Write the self-contained HTML report of a result (dict or path) or of a sweep directory to `path` "
        "(atomically).");
  m.def("traces", &pwpy::traces, "result"_a, "rank"_a = 1, "spec"_a = py::none(),
        "Recompute the traces of the compensator of rank `rank` of a result: numpy arrays per plant "
        "(time_s, y, u of the unit step, each of shape (n,); loop = L(jw), complex, shape (m,)) on "
        "frequency_rad_s (shape (m,)).");
  m.def("saturated_response", &pwpy::saturated_response, "spec"_a, "compensator"_a = py::none(), py::kw_only(),
        "minimum"_a = py::none(), "maximum"_a = py::none(), "rate_limit"_a = py::none(), "anti_windup"_a = py::none(),
        "tracking_time_s"_a = py::none(), "reference"_a = py::none(), "load"_a = 0.0, "output"_a = 0.0,
        "initial_reference"_a = 0.0, "horizon_s"_a = py::none(), "samples"_a = 2001, "plant"_a = 0,
        "Simulate the loop (compensator, default the spec's `current`; plant index `plant`, 0 = nominal, its "
        "delay as the spec's Pade approximant) from rest (at the equilibrium it holds with the constant "
        "reference initial_reference, default 0: all states zero) with the actuator held within [minimum, maximum] "
        "(arguments left at None come from the spec's `actuator` block, reference from its reference_step; "
        "without the block minimum and maximum are required, anti_windup defaults to none, reference to 1) "
        "(and |du/dt| <= rate_limit), for steps of the reference, a load at the plant input and an output "
        "disturbance applied at t = 0+. anti_windup: none, back_calculation (with tracking_time_s) or "
        "conditional; both need one integrator in the compensator. Each mode of the piecewise-linear loop is "
        "propagated exactly and the switching instants are found by bisection. Returns numpy arrays time_s, "
        "y, u (applied), v (demanded) of shape (samples,), switch_times_s, limited_time_s and chattering.");
}
