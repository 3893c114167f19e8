#include "polewright/requirements/region.hpp"

#include "../model/format_text.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace pw {

namespace {
using detail::fmt;
}  // namespace

bool Region::contains_shape(Complex p) const {
  const double wn = std::abs(p);
  const double zeta = wn > 0.0 ? -p.real() / wn : 1.0;
  return zeta >= min_damping && -p.real() >= min_decay;
}

bool Region::contains(Complex p) const {
  if (!contains_shape(p)) return false;
  const double wn = std::abs(p);
  if (wn < min_frequency) return false;
  if (max_frequency > 0.0 && wn > max_frequency) return false;
  return true;
}

double damping_from_overshoot(double os) {
  const double l = std::log(os);
  return -l / std::sqrt(M_PI * M_PI + l * l);
}

double bandwidth_ratio(double zeta) {
  const double z2 = zeta * zeta;
  return std::sqrt(1.0 - 2.0 * z2 + std::sqrt(4.0 * z2 * z2 - 4.0 * z2 + 2.0));
}

bool region_holds(const Region& region, const std::vector<PoleInfo>& poles) {
  const PoleInfo* dominant = nullptr;
  for (const PoleInfo& p : poles) {
    if (!p.matters) continue;
    if (!region.contains_shape(p.pole)) return false;
    if (!dominant || p.pole.real() > dominant->pole.real()) dominant = &p;
  }
  return !dominant || region.contains(dominant->pole);
}

Region region_from_requirements(const RequirementSet& req) {
  Region r;
  if (auto os = req.limit(MetricId::Overshoot, Sense::AtMost)) {
    r.min_damping = damping_from_overshoot(*os / 100.0);
    r.derivations.push_back(fmt("damping >= %.4f from overshoot <= %g %%: zeta = -ln(OS)/sqrt(pi^2 + ln(OS)^2)",
                                r.min_damping, *os));
  }
  if (auto z = req.limit(MetricId::DampingRatio, Sense::AtLeast)) {
    if (*z > r.min_damping) {
      r.min_damping = *z;
      r.derivations.push_back(fmt("damping >= %.4f from damping_ratio", *z));
    }
  }
  const double zeta = std::min(r.min_damping, 0.999999);
  if (auto ts = req.limit(MetricId::SettlingTime, Sense::AtMost)) {
    const double b = req.settling_band;
    r.min_decay = -std::log(b * std::sqrt(1.0 - zeta * zeta)) / *ts;
    r.derivations.push_back(fmt("decay rate >= %.6g 1/s from settling <= %g s in a %g %% band: "
                                "sigma = -ln(b sqrt(1 - zeta^2)) / Ts",
                                r.min_decay, *ts, 100.0 * b));
  }
  if (auto tr = req.limit(MetricId::RiseTime, Sense::AtMost)) {
    r.min_frequency = (1.0 - 0.4167 * zeta + 2.917 * zeta * zeta) / *tr;
    r.derivations.push_back(fmt("natural frequency >= %.6g rad/s from rise time <= %g s: "
                                "wn = (1 - 0.4167 zeta + 2.917 zeta^2) / Tr (common-practice fit)",
                                r.min_frequency, *tr));
  }
  if (auto wmin = req.limit(MetricId::NaturalFrequency, Sense::AtLeast)) {
    if (*wmin > r.min_frequency) {
      r.min_frequency = *wmin;
      r.derivations.push_back(fmt("natural frequency >= %.6g rad/s from natural_frequency_rad_s", *wmin));
    }
  }
  if (auto wb = req.limit(MetricId::Bandwidth, Sense::AtMost)) {
    r.max_frequency = *wb / bandwidth_ratio(zeta);
    r.derivations.push_back(fmt("natural frequency <= %.6g rad/s from bandwidth <= %g rad/s: "
                                "wn = wb / sqrt(1 - 2 zeta^2 + sqrt(4 zeta^4 - 4 zeta^2 + 2))",
                                r.max_frequency, *wb));
  }
  if (auto wmax = req.limit(MetricId::NaturalFrequency, Sense::AtMost)) {
    if (r.max_frequency == 0.0 || *wmax < r.max_frequency) {
      r.max_frequency = *wmax;
      r.derivations.push_back(fmt("natural frequency <= %.6g rad/s from natural_frequency_rad_s", *wmax));
    }
  }
  return r;
}

}  // namespace pw
