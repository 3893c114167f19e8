#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/requirements/region.hpp"

using namespace pw;

TEST_CASE("overshoot to damping: 16.3 % <-> 0.5, 4.3 % <-> 0.707 (standard second-order result)", "[requirements][region]") {
  CHECK(damping_from_overshoot(std::exp(-0.5 * M_PI / std::sqrt(0.75))) == Approx(0.5).epsilon(1e-12));
  CHECK(damping_from_overshoot(0.163) == Approx(0.5).margin(1e-3));
  CHECK(damping_from_overshoot(0.043) == Approx(0.707).margin(1e-3));
  // Bandwidth of the standard loop: wb / wn = 1.272 at zeta = 0.5 (6.36 / 5), 1 at zeta = 0.707.
  CHECK(bandwidth_ratio(0.5) == Approx(6.36 / 5.0).margin(1e-3));
  CHECK(bandwidth_ratio(std::sqrt(0.5)) == Approx(1.0).epsilon(1e-12));
}

TEST_CASE("region from requirements and membership", "[requirements][region]") {
  RequirementSet req;
  req.items = {{MetricId::Overshoot, Sense::AtMost, 16.3033534822},
               {MetricId::SettlingTime, Sense::AtMost, 2.0},
               {MetricId::RiseTime, Sense::AtMost, 0.5},
               {MetricId::Bandwidth, Sense::AtMost, 50.0}};
  req.settling_band = 0.02;
  const Region r = region_from_requirements(req);
  CHECK(r.min_damping == Approx(0.5).epsilon(1e-9));
  // sigma = -ln(0.02 sqrt(1 - 0.25)) / 2 (field-notes formula).
  CHECK(r.min_decay == Approx(-std::log(0.02 * std::sqrt(0.75)) / 2.0));
  CHECK(r.min_frequency == Approx((1 - 0.4167 * 0.5 + 2.917 * 0.25) / 0.5).epsilon(1e-9));
  CHECK(r.max_frequency == Approx(50.0 / bandwidth_ratio(0.5)));
  CHECK(r.derivations.size() == 4);
  CHECK(r.contains(Complex(-3.0, 3.0)));     // zeta 0.707, sigma 3, wn 4.24
  CHECK_FALSE(r.contains(Complex(-1.0, 3.0)));  // too lightly damped and slow
  CHECK_FALSE(r.contains(Complex(-100.0, 0)));  // beyond wn max
  CHECK(r.bounded());
  CHECK_FALSE(Region{}.bounded());
  RequirementSet z;
  z.items = {{MetricId::DampingRatio, Sense::AtLeast, 0.6}, {MetricId::NaturalFrequency, Sense::AtLeast, 3.9}};
  const Region rz = region_from_requirements(z);
  CHECK(rz.min_damping == 0.6);
  CHECK(rz.min_frequency == 3.9);
}
