#include "polewright/jobs/check.hpp"

#include <cmath>
#include <cstdio>

#include "polewright/model/root_accuracy.hpp"

namespace pw {

namespace {

bool has_nonzero_root(const Zpk& z) {
  for (const Roots* set : {&z.zeros, &z.poles})
    for (const Complex& r : *set)
      if (std::abs(r) > 0.0) return true;
  return false;
}

// Frequency scale for a root at the origin of block `own`: the geometric mean of its non-zero
// root magnitudes, else those of the other block, else 1.
double origin_scale(const Zpk& own, const Zpk& other) {
  if (has_nonzero_root(own)) return zpk_frequency_scale(own);
  return zpk_frequency_scale(other);
}

}  // namespace

void check_cancellations(const Zpk& c, const Plant& plant, const std::string& path) {
  auto scan = [&](const Roots& unstable_set, const Roots& cancel_set, const char* what, double scale) {
    for (const Complex& p : unstable_set) {
      if (p.real() < 0.0) continue;
      const double tol = 1e-6 * (std::abs(p) > 0.0 ? std::abs(p) : scale);
      for (const Complex& z : cancel_set) {
        if (std::abs(z - p) <= tol) {
          char buf[200];
          std::snprintf(buf, sizeof buf, "%s at %g%+gj cancels an unstable root of the other block: "
                        "the loop would hide a growing internal signal", what, z.real(), z.imag());
          throw SpecError(path, buf);
        }
      }
    }
  };
  scan(plant.tf.poles, c.zeros, "compensator zero", origin_scale(plant.tf, c));
  scan(c.poles, plant.tf.zeros, "plant zero", origin_scale(c, plant.tf));
}

std::vector<std::string> conditioning_warnings(const nlohmann::json& doc) {
  std::vector<std::string> out;
  auto scan = [&](const nlohmann::json& obj, const std::string& path) {
    if (!obj.is_object()) return;
    for (const char* key : {"numerator", "denominator"}) {
      const auto it = obj.find(key);
      if (it == obj.end() || !it->is_array()) continue;
      Poly p;
      for (const nlohmann::json& x : *it)
        if (x.is_number()) p.push_back(x.get<double>());
      if (poly_degree(p) < 2) continue;
      const RootAccuracy a = root_accuracy(p, poly_roots(p));
      if (!(a.worst_relative > 1e-6)) continue;
      char buf[400];
      if (a.cluster_size > 1)
        std::snprintf(buf, sizeof buf, "%s.%s: a cluster of %d roots near %.6g%+.6gj is fixed by the coefficients only "
                      "to about %.2g relative; the open-loop roots listed are that uncertain (give repeated roots "
                      "as zeros/poles to state them exactly)", path.c_str(), key, a.cluster_size, a.near.real(),
                      a.near.imag(), a.worst_relative);
      else
        std::snprintf(buf, sizeof buf, "%s.%s: the root near %.6g%+.6gj is fixed by the coefficients only to about "
                      "%.2g relative; the open-loop roots listed are that uncertain (give the roots as zeros/poles)",
                      path.c_str(), key, a.near.real(), a.near.imag(), a.worst_relative);
      out.push_back(buf);
    }
  };
  if (!doc.is_object()) return out;
  if (const auto plant = doc.find("plant"); plant != doc.end()) {
    scan(*plant, "$.plant");
    if (const auto v = plant->find("variants"); plant->is_object() && v != plant->end() && v->is_array())
      for (size_t i = 0; i < v->size(); ++i) scan((*v)[i], "$.plant.variants[" + std::to_string(i) + "]");
  }
  if (const auto cur = doc.find("current"); cur != doc.end()) scan(*cur, "$.current");
  return out;
}

CheckReport run_check(const Spec& spec, const Zpk& compensator, const CheckOptions& options) {
  CheckReport r;
  r.spec_name = spec.name;
  r.spec_document = spec.document;
  r.compensator = compensator;
  r.plants = spec.plants;
  r.requirements = spec.requirements;
  r.analysis = spec.analysis;
  r.analysis.step.keep_trace = options.trace_step;
  r.region = region_from_requirements(spec.requirements);
  for (size_t i = 0; i < spec.plants.size(); ++i) check_cancellations(compensator, spec.plants[i], options.compensator_path);
  r.evaluation = evaluate_all(compensator, spec.plants, spec.requirements, r.region, r.analysis);
  r.warnings = conditioning_warnings(spec.document);
  if (spec.implementation) {
    r.sampled = evaluate_sampled(compensator, spec.plants, spec.requirements, r.region, r.analysis, *spec.implementation,
                                 r.evaluation);
    r.continuous = std::move(r.evaluation);
    r.evaluation = r.sampled->evaluation;
    for (const std::string& w : r.sampled->warnings) r.warnings.push_back(w);
    r.rate = rate_guidance(*spec.implementation, *r.continuous);
  }
  if (options.find_sample_time)
    r.sample_time_search = find_slowest_sample_time(compensator, spec.plants, spec.requirements, r.region, r.analysis,
                                                    spec.implementation.value_or(Implementation{}),
                                                    r.continuous ? *r.continuous : r.evaluation, options.sample_time);
  r.locus = root_locus(make_loop_parts(compensator, spec.plants.front(), spec.analysis.pade_order), options.locus);
  return r;
}

}  // namespace pw
