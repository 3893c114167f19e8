#include "polewright/synthesis/limits.hpp"

#include "../model/format_text.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace pw {

namespace {
std::string fmt(double v) {
  char b[32];
  std::snprintf(b, sizeof b, "%.4g", v);
  return b;
}
}  // namespace

double required_crossover(const Region& region, const RequirementSet& req) {
  const double z = std::clamp(region.min_damping > 0.0 ? region.min_damping : 0.5, 0.1, 0.99);
  double wn = region.min_frequency;
  if (region.min_decay > 0.0) wn = std::max(wn, region.min_decay / z);
  double wc = wn * std::sqrt(std::sqrt(1.0 + 4.0 * z * z * z * z) - 2.0 * z * z);
  if (auto c = req.limit(MetricId::Crossover, Sense::AtLeast)) wc = std::max(wc, *c);
  if (auto b = req.limit(MetricId::Bandwidth, Sense::AtLeast)) wc = std::max(wc, *b / 1.6);
  return wc;
}

std::vector<PlantLimit> plant_limits(const std::vector<Plant>& plants, const RequirementSet& req, const Region& region,
                                     const StageSettings& stages) {
  std::vector<PlantLimit> out;
  const double need = required_crossover(region, req);
  // The requirement that drives the needed crossover, for the message.
  std::string driver = "crossover_rad_s";
  if (req.has(MetricId::SettlingTime)) driver = "settling_time_s";
  else if (req.has(MetricId::RiseTime)) driver = "rise_time_s";
  else if (req.has(MetricId::NaturalFrequency)) driver = "natural_frequency_rad_s";
  else if (req.has(MetricId::Bandwidth)) driver = "bandwidth_rad_s";
  const std::optional<double> cmax = req.limit(MetricId::Crossover, Sense::AtMost);
  const std::optional<double> bmax = req.limit(MetricId::Bandwidth, Sense::AtMost);

  for (const Plant& p : plants) {
    double zmin = INFINITY, pmax = 0.0;
    for (const Complex& z : p.tf.zeros)
      if (z.real() > 0.0) zmin = std::min(zmin, std::abs(z));
    for (const Complex& q : p.tf.poles)
      if (q.real() > 0.0) pmax = std::max(pmax, std::abs(q));
    if (std::isfinite(zmin)) {
      PlantLimit l{"rhp_zero", p.name, zmin, zmin / 2.0, std::nullopt, need > zmin / 2.0, need > zmin / 2.0 ? driver : "", ""};
      l.message = "right-half-plane zero at " + fmt(zmin) + " rad/s caps the crossover near " + fmt(zmin / 2.0) + " rad/s";
      if (l.binding) l.message += "; " + driver + " needs about " + fmt(need) + " rad/s";
      out.push_back(l);
    }
    if (pmax > 0.0) {
      const double lo = 2.0 * pmax;
      const std::optional<double> cap = cmax ? cmax : (bmax ? std::optional<double>(*bmax) : std::nullopt);
      // One plain value, never *cap: reading the optional behind a test still trips GCC's
      // -Wmaybe-uninitialized under LTO. Infinite means uncapped.
      const double cap_rad_s = cap.value_or(INFINITY);
      const bool capped = cap_rad_s < lo;
      PlantLimit l{"unstable_pole", p.name, pmax, std::nullopt, lo, capped, capped ? (cmax ? "crossover_rad_s" : "bandwidth_rad_s") : "", ""};
      l.message = "unstable pole at " + fmt(pmax) + " rad/s needs a crossover above about " + fmt(lo) + " rad/s";
      if (l.binding) l.message += "; the requirements cap it at " + fmt(cap_rad_s) + " rad/s";
      out.push_back(l);
    }
    if (p.delay_s > 0.0) {
      const double cap = 1.0 / p.delay_s;
      PlantLimit l{"dead_time", p.name, p.delay_s, cap, std::nullopt, need > cap, need > cap ? driver : "", ""};
      l.message = "dead time of " + fmt(p.delay_s) + " s caps the crossover near " + fmt(cap) + " rad/s";
      if (l.binding) l.message += "; " + driver + " needs about " + fmt(need) + " rad/s";
      out.push_back(l);
    }
    if (auto e = req.limit(MetricId::SteadyStateError, Sense::AtMost)) {
      const int q = static_cast<int>(req.error_signal);
      const int needed = *e == 0.0 ? q + 1 : q;
      const int have = zpk_integrators(p.tf) + (stages.integrator != IntegratorChoice::Off ? 1 : 0);
      if (needed > 0) {
        PlantLimit l{"integrators", p.name, static_cast<double>(needed), std::nullopt, std::nullopt, have < needed,
                     have < needed ? "steady_state_error" : "", ""};
        const int plant_has = zpk_integrators(p.tf);
        l.message = "the steady-state error bound needs " + detail::integrators_words(needed) + " in the loop; the plant has " +
                    (plant_has == 0 ? std::string("none") : std::to_string(plant_has));
        if (plant_has < needed)
          l.message += stages.integrator != IntegratorChoice::Off ? " and the stages allow one more" : " and the stages allow none";
        out.push_back(l);
      }
    }
    // The actuator's range: a loop with integral action holds y = r only with u = r / G(0)
    // (final-value theorem), whatever the compensator; beyond the limits y cannot settle there.
    const bool integral = stages.integrator == IntegratorChoice::On ||
                          (req.limit(MetricId::SteadyStateError, Sense::AtMost) == 0.0 && req.error_signal == TestSignal::Step);
    std::optional<MetricId> limited;  // the first requirement judged on the limited step
    for (MetricId id : {MetricId::SaturatedSettlingTime, MetricId::SaturatedOvershoot, MetricId::SaturatedRiseTime})
      if (!limited && req.has(id)) limited = id;
    const int plant_integrators = zpk_integrators(p.tf);
    const double g0 = plant_integrators == 0 ? p.tf.evaluate(Complex(0.0, 0.0)).real() : INFINITY;
    const bool g0_known = plant_integrators > 0 || (std::isfinite(g0) && g0 != 0.0);
    auto beyond = [&](double u) {
      return u > req.actuator->maximum ? "above the actuator maximum " + fmt(req.actuator->maximum)
                                       : "below the actuator minimum " + fmt(req.actuator->minimum);
    };
    auto outside = [&](double u) { return u > req.actuator->maximum || u < req.actuator->minimum; };
    if (req.actuator && limited && integral && plant_integrators == 0 && g0_known) {
      const double u = req.reference_step / g0;
      if (outside(u)) {
        PlantLimit l{"actuator_range", p.name, u, std::nullopt, std::nullopt, true, metric_info(*limited).key, ""};
        l.message = "the reference step of " + fmt(req.reference_step) + " needs u = " + fmt(u) +
                    " in steady state (the step over G(0) = " + fmt(g0) + "), " + beyond(u) +
                    ": no compensator settles y there";
        out.push_back(l);
      }
    }
    // The load step from the operating point: y returns to y0 = r0 only with u = r0 / G(0) - d
    // (r0 / G(0) is 0 for a plant with an integrator); beyond the limits it cannot.
    if (req.actuator && req.has(MetricId::SaturatedLoadRecovery) && g0_known) {
      const double u0 = plant_integrators > 0 ? 0.0 : req.held_reference() / g0;
      const double u = u0 - req.disturbance_step;
      if (outside(u)) {
        PlantLimit l{"actuator_range", p.name, u, std::nullopt, std::nullopt, true, "saturated_load_recovery_s", ""};
        l.message = "holding the reference " + fmt(req.held_reference()) + " against the load step of " +
                    fmt(req.disturbance_step) + " needs u = " + fmt(u) + ", " + beyond(u) +
                    ": no compensator returns y there";
        out.push_back(l);
      }
    }
    if (const std::optional<MetricId> m = compensator_integrator_driver(req)) {
      // A load step at the plant input leaves y = d / C(0) for a compensator without an
      // integrator, whatever the plant's own integrators (final-value theorem on G S).
      const std::string key = metric_info(*m).key;
      const bool none = stages.integrator == IntegratorChoice::Off;
      PlantLimit l{"integrators", p.name, 1.0, std::nullopt, std::nullopt, none, none ? key : "", ""};
      l.message = key + " needs an integrator in the compensator (a plant integrator does not return the output to zero "
                        "after a load step at the plant input); the stages allow " +
                  std::string(none ? "none" : "one, so every structure carries it");
      out.push_back(l);
    }
  }
  return out;
}

std::optional<MetricId> compensator_integrator_driver(const RequirementSet& req) {
  for (MetricId id : {MetricId::LoadRecovery, MetricId::LoadIae, MetricId::SaturatedLoadRecovery})
    if (req.limit(id, Sense::AtMost)) return id;
  return std::nullopt;
}

}  // namespace pw
