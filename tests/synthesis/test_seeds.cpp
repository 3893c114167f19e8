#include <catch2/catch.hpp>

#include <cmath>
#include <set>

#include "polewright/synthesis/seeds.hpp"

using namespace pw;

TEST_CASE("root-locus seed for 4/(s(s+2)) lands near the published lead", "[synthesis][seeds]") {
  // Textbook worked example (from memory): for zeta 0.5, wn 4 the construction gives a lead of
  // about 4.68 (s + 2.9)/(s + 5.4). The seed aims 5 % inside the region (zeta 0.545, wn 4.1), so
  // its corners are near, not equal, and the angle condition holds at its target pole.
  Plant g;
  g.tf.gain = 4;
  g.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  Region r;
  r.min_damping = 0.5;
  r.min_frequency = 4.0;
  const ParamSpace ps = make_param_space(Structure{false, 1, 0, 0}, {0.1, 100.0}, -6, 6, 1.0);
  const std::vector<Seed> seeds = published_seeds(ps, g, r, RequirementSet{});
  REQUIRE(seeds.size() == 2);
  const Complex s = target_pole(r, g, {0.1, 100.0});
  for (const Seed& sd : seeds) {
    INFO(sd.origin);
    const Zpk c = params_to_zpk(ps, sd.x);
    const Complex L = c.evaluate(s) * g.tf.evaluate(s);
    CHECK(std::abs(std::arg(L)) == Approx(M_PI).epsilon(1e-6));  // angle condition
    CHECK(std::abs(L) == Approx(1.0).epsilon(1e-6));              // magnitude condition
  }
  const Zpk below = params_to_zpk(ps, seeds[0].x);
  CHECK(-below.zeros[0].real() == Approx(-s.real()).epsilon(1e-9));  // zero directly below s*
  CHECK(-below.poles[0].real() == Approx(5.4).margin(1.5));
}

TEST_CASE("notch seed sits on the lightly damped plant mode", "[synthesis][seeds]") {
  Plant g;
  g.tf.gain = 180000;
  g.tf.poles = {Complex(0, 0), Complex(-8, 0), Complex(-1.2, 59.988), Complex(-1.2, -59.988)};
  const ParamSpace ps = make_param_space(Structure{false, 1, 0, 1}, {0.5, 600.0}, -6, 6, 1.0);
  Region r;
  r.min_damping = 0.6;
  r.min_frequency = 10.0;
  const std::vector<Seed> seeds = published_seeds(ps, g, r, RequirementSet{});
  REQUIRE_FALSE(seeds.empty());
  const size_t notch = 1 + 2;  // gain, lead (2), then the notch centre
  CHECK(std::pow(10.0, seeds[0].x[notch]) == Approx(60.0).epsilon(1e-3));
}

TEST_CASE("Halton points are in the unit cube and well spread", "[synthesis][seeds]") {
  std::set<long long> cells;
  for (int i = 0; i < 64; ++i) {
    const std::vector<double> u = halton_point(i, 2, {0.3, 0.7});
    for (double v : u) CHECK((v >= 0.0 && v < 1.0));
    cells.insert(static_cast<long long>(u[0] * 8) * 8 + static_cast<long long>(u[1] * 8));
  }
  // Low discrepancy: 64 independent uniform points fill 64 (1 - (63/64)^64) = 40.6 of the 64 cells on
  // average (standard deviation about 2.5); the Halton points fill clearly more.
  CHECK(cells.size() >= 46);
  CHECK(halton_point(0, 1, {})[0] == Approx(0.5));  // base 2: 1/2, 1/4, 3/4, ...
  CHECK(halton_point(1, 1, {})[0] == Approx(0.25));
}

TEST_CASE("the crossover target follows the frequency-domain requirements (common practice)", "[synthesis][seeds]") {
  RequirementSet req;
  CHECK_FALSE(crossover_target(req));
  req.items.push_back({MetricId::Crossover, Sense::AtLeast, 2.0});
  CHECK(*crossover_target(req) == Approx(3.0));
  req.items.push_back({MetricId::Crossover, Sense::AtMost, 8.0});
  CHECK(*crossover_target(req) == Approx(4.0));  // sqrt(2 * 8)
  RequirementSet bw;
  bw.items.push_back({MetricId::Bandwidth, Sense::AtMost, 14.0});
  CHECK(*crossover_target(bw) == Approx(0.6 * 14.0 / 1.4));
}
