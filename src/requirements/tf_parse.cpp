// Plants and compensators in either form: numerator/denominator or zeros/poles/gain.
#include <cmath>

#include "json_reader.hpp"
#include "polewright/model/eigen.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw {

using detail::describe;
using detail::index_path;
using detail::json;
using detail::key_path;
using detail::member;
using detail::read_number;

namespace {

constexpr double kMaxRootMagnitude = 1e9;  // rad/s

Poly read_coefficients(const json& j, const std::string& path) {
  if (!j.is_array()) throw SpecError(path, "must be an array of numbers (got " + describe(j) + ")");
  if (j.empty()) throw SpecError(path, "must not be empty");
  Poly p;
  for (size_t i = 0; i < j.size(); ++i) p.push_back(read_number(j[i], index_path(path, i)));
  return p;
}

void append_root(const json& e, const std::string& path, Roots& out) {
  if (e.is_number()) {
    const double v = read_number(e, path, kMaxRootMagnitude);
    out.push_back(Complex(v, 0.0));
    return;
  }
  if (!e.is_object()) throw SpecError(path, "must be a number, {\"re\", \"im\"} or {\"wn\", \"zeta\"} (got " + describe(e) + ")");
  if (member(e, "re") || member(e, "im")) {
    detail::expect_object(e, path, {"re", "im"});
    const json* re = member(e, "re");
    const json* im = member(e, "im");
    if (!re) throw SpecError(key_path(path, "re"), "is missing");
    if (!im) throw SpecError(key_path(path, "im"), "is missing");
    const double r = read_number(*re, key_path(path, "re"), kMaxRootMagnitude);
    const double i = read_number(*im, key_path(path, "im"), kMaxRootMagnitude);
    if (i == 0.0) throw SpecError(key_path(path, "im"), "must be non-zero (give a real root as a plain number)");
    out.push_back(Complex(r, std::abs(i)));
    out.push_back(Complex(r, -std::abs(i)));
    return;
  }
  if (member(e, "wn") || member(e, "zeta")) {
    detail::expect_object(e, path, {"wn", "zeta"});
    const json* wn = member(e, "wn");
    const json* zeta = member(e, "zeta");
    if (!wn) throw SpecError(key_path(path, "wn"), "is missing");
    if (!zeta) throw SpecError(key_path(path, "zeta"), "is missing");
    const double w = read_number(*wn, key_path(path, "wn"), kMaxRootMagnitude);
    const double z = read_number(*zeta, key_path(path, "zeta"), 1e6);
    if (!(w > 0.0)) throw SpecError(key_path(path, "wn"), "must be > 0 (got " + describe(*wn) + ")");
    if (std::abs(z) < 1.0) {
      const double wd = w * std::sqrt(1.0 - z * z);
      out.push_back(Complex(-z * w, wd));
      out.push_back(Complex(-z * w, -wd));
    } else {
      const double d = w * std::sqrt(z * z - 1.0);
      out.push_back(Complex(-z * w + d, 0.0));
      out.push_back(Complex(-z * w - d, 0.0));
    }
    return;
  }
  detail::expect_object(e, path, {"re", "im", "wn", "zeta"});
  throw SpecError(path, "a root object needs {\"re\", \"im\"} or {\"wn\", \"zeta\"}");
}

Roots read_roots(const json& j, const std::string& path) {
  if (!j.is_array()) throw SpecError(path, "must be an array of roots (got " + describe(j) + ")");
  Roots r;
  for (size_t i = 0; i < j.size(); ++i) append_root(j[i], index_path(path, i), r);
  return r;
}

}  // namespace

// Reads either form from an object whose keys were already checked.
Zpk read_transfer_function(const json& j, const std::string& path, int max_order, const char* what) {
  const bool poly = member(j, "numerator") || member(j, "denominator");
  const bool roots = member(j, "zeros") || member(j, "poles") || member(j, "gain");
  if (poly && roots) {
    const char* k = member(j, "zeros") ? "zeros" : (member(j, "poles") ? "poles" : "gain");
    throw SpecError(key_path(path, k), "mixes the zeros/poles/gain form with numerator/denominator; use one form");
  }
  Zpk z;
  if (poly) {
    const json* num = member(j, "numerator");
    const json* den = member(j, "denominator");
    if (!num) throw SpecError(key_path(path, "numerator"), "is missing (the denominator is given)");
    if (!den) throw SpecError(key_path(path, "denominator"), "is missing (the numerator is given)");
    const Poly n = read_coefficients(*num, key_path(path, "numerator"));
    const Poly d = read_coefficients(*den, key_path(path, "denominator"));
    if (poly_degree(d) < 0) throw SpecError(key_path(path, "denominator"), "is all zero");
    if (d.front() == 0.0)
      throw SpecError(index_path(key_path(path, "denominator"), 0), "the leading coefficient must be non-zero");
    if (poly_degree(n) < 0) throw SpecError(key_path(path, "numerator"), "is all zero: the " + std::string(what) + " would pass nothing");
    if (poly_degree(n) > poly_degree(d))
      throw SpecError(key_path(path, "numerator"), std::string("improper ") + what + ": numerator degree " +
                                                       std::to_string(poly_degree(n)) + " exceeds denominator degree " +
                                                       std::to_string(poly_degree(d)));
    if (poly_degree(d) > max_order)
      throw SpecError(key_path(path, "denominator"), std::string(what) + " order " + std::to_string(poly_degree(d)) +
                                                         " is above the limit of " + std::to_string(max_order));
    // Roots once per polynomial first, so a numerical failure names its field.
    for (const auto& [poly_in, key] : {std::pair<const Poly*, const char*>{&n, "numerator"}, {&d, "denominator"}}) {
      try {
        (void)poly_roots(*poly_in);
      } catch (const NumericalError& e) {
        throw SpecError(key_path(path, key), e.what());
      }
    }
    z = zpk_from_polynomials(n, d);
    for (const Roots* set : {&z.zeros, &z.poles})
      for (const Complex& r : *set)
        if (!std::isfinite(r.real()) || !std::isfinite(r.imag()) || std::abs(r) > kMaxRootMagnitude)
          throw SpecError(path, "the polynomial roots are not finite or beyond 1e9 rad/s: the coefficients are badly scaled");
  } else {
    if (const json* g = member(j, "gain")) z.gain = read_number(*g, key_path(path, "gain"));
    if (const json* zs = member(j, "zeros")) z.zeros = read_roots(*zs, key_path(path, "zeros"));
    if (const json* ps = member(j, "poles")) z.poles = read_roots(*ps, key_path(path, "poles"));
    if (z.gain == 0.0) throw SpecError(key_path(path, "gain"), "must be non-zero: the " + std::string(what) + " would pass nothing");
    if (!z.is_proper())
      throw SpecError(key_path(path, "zeros"), std::string("improper ") + what + ": " + std::to_string(z.zeros.size()) +
                                                   " zeros but only " + std::to_string(z.poles.size()) + " poles");
    if (z.order() > max_order)
      throw SpecError(key_path(path, "poles"), std::string(what) + " order " + std::to_string(z.order()) +
                                                   " is above the limit of " + std::to_string(max_order));
    z.zeros = make_conjugate_symmetric(z.zeros);
    z.poles = make_conjugate_symmetric(z.poles);
  }
  return z;
}

Zpk parse_compensator(const json& j, const std::string& path) {
  detail::expect_object(j, path, known_keys("compensator"));
  return read_transfer_function(j, path, kMaxCompensatorOrder, "compensator");
}

Plant parse_plant_object(const json& j, const std::string& path, bool allow_name, const Zpk* current) {
  detail::expect_object(j, path, known_keys(allow_name ? "variant" : "plant_core"));
  Plant p;
  p.name = "nominal";
  if (const json* n = member(j, "name")) {
    if (!n->is_string()) throw SpecError(key_path(path, "name"), "must be a string");
    p.name = n->get<std::string>();
  }
  if (const json* d = member(j, "delay_s")) {
    p.delay_s = read_number(*d, key_path(path, "delay_s"), 1e9);
    if (p.delay_s < 0.0) throw SpecError(key_path(path, "delay_s"), "must be >= 0 (got " + describe(*d) + ")");
  }
  if (const json* m = member(j, "measured")) {
    for (const char* k : {"numerator", "denominator", "zeros", "poles", "gain", "delay_s"})
      if (member(j, k))
        throw SpecError(key_path(path, k), "cannot stand beside measured: a measured plant's model is fitted to its data (a dead "
                                           "time goes in measured.fit.delay_s)");
    bool from_loop = false;
    if (const json* l = member(j, "measured_loop")) {
      if (!l->is_boolean()) throw SpecError(key_path(path, "measured_loop"), "must be true or false");
      from_loop = l->get<bool>();
    }
    p.measured = parse_measured(*m, key_path(path, "measured"), current, from_loop);
    p.tf = p.measured->fit.model;
    p.delay_s = p.measured->fit.delay_s;
    return p;
  }
  if (member(j, "measured_loop")) throw SpecError(key_path(path, "measured_loop"), "applies only to a measured plant (measured)");
  if (!member(j, "numerator") && !member(j, "denominator") && !member(j, "poles") && !member(j, "zeros") &&
      !member(j, "gain"))
    throw SpecError(path, "gives no transfer function: use numerator/denominator, zeros/poles/gain or measured");
  p.tf = read_transfer_function(j, path, kMaxPlantOrder, "plant");
  return p;
}

}  // namespace pw
