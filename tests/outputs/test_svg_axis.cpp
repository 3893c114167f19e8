#include <catch2/catch.hpp>

#include <cmath>

#include "outputs/svg_axis.hpp"

using namespace pw;

// Expected ticks are worked by hand from the 1-2-5 rule (steps of 1, 2 or 5 times a power of ten).
TEST_CASE("nice_step picks 1, 2 or 5 times a power of ten", "[outputs][svg]") {
  CHECK(nice_step(10.0, 5) == Approx(2.0));
  CHECK(nice_step(1.0, 5) == Approx(0.2));
  CHECK(nice_step(0.6, 6) == Approx(0.1));
  CHECK(nice_step(360.0, 6) == Approx(50.0));
  CHECK(nice_step(15.9, 6) == Approx(2.0));
  CHECK(nice_step(0.0, 5) == 1.0);
}

TEST_CASE("nice_linear_ticks lists the multiples of the step inside the range", "[outputs][svg]") {
  const std::vector<double> t = nice_linear_ticks(0.0, 1.0, 5);
  REQUIRE(t.size() == 6);
  for (size_t i = 0; i < t.size(); ++i) CHECK(t[i] == Approx(0.2 * i).margin(1e-12));
  const std::vector<double> u = nice_linear_ticks(-3.7, 12.2, 6);
  REQUIRE(u.size() == 8);
  CHECK(u.front() == Approx(-2.0));
  CHECK(u.back() == Approx(12.0));
  CHECK(u[1] == 0.0);  // exactly zero, not 1e-16
  CHECK(nice_linear_ticks(1.0, 1.0, 5).empty());
}

TEST_CASE("nice_bounds widens a range outward to tick multiples", "[outputs][svg]") {
  double lo = -0.03, hi = 1.27;
  nice_bounds(lo, hi, 6);
  CHECK(lo == Approx(-0.2));
  CHECK(hi == Approx(1.4));
  double a = 5.0, b = 5.0;  // zero width: +-10 %
  nice_bounds(a, b, 5);
  CHECK(a <= 4.5);
  CHECK(b >= 5.5);
}

TEST_CASE("log axis 0.3..4000 has decade ticks 1, 10, 100, 1000 and unlabelled minors", "[outputs][svg]") {
  const std::vector<Tick> t = log_ticks(0.3, 4000.0);
  std::vector<double> majors;
  std::vector<std::string> labels;
  int minors = 0;
  for (const Tick& k : t) {
    if (k.major) {
      majors.push_back(k.value);
      labels.push_back(k.label);
    } else {
      ++minors;
      CHECK(k.label.empty());
    }
  }
  REQUIRE(majors.size() == 4);
  CHECK(majors[0] == Approx(1.0));
  CHECK(majors[3] == Approx(1000.0));
  CHECK(labels == std::vector<std::string>{"1", "10", "100", "1000"});
  // 0.3..0.9 (7), 2..9, 20..90, 200..900 (8 each), 2000..4000 (3).
  CHECK(minors == 7 + 24 + 3);
}

TEST_CASE("a log axis inside one decade labels the 2 and 5 minors too", "[outputs][svg]") {
  const std::vector<Tick> t = log_ticks(1.5, 8.0);
  std::vector<std::string> labels;
  for (const Tick& k : t)
    if (!k.label.empty()) labels.push_back(k.label);
  CHECK(labels == std::vector<std::string>{"2", "5"});
  CHECK(log_ticks(-1.0, 10.0).empty());
}

TEST_CASE("over more than 8 decades every other decade is labelled", "[outputs][svg]") {
  int labelled = 0, majors = 0;
  for (const Tick& k : log_ticks(1e-4, 1e6)) {
    if (k.major) ++majors;
    if (!k.label.empty()) ++labelled;
  }
  CHECK(majors == 11);
  CHECK(labelled == 6);
}

TEST_CASE("linear_ticks labels every tick with the same decimal count", "[outputs][svg]") {
  const std::vector<Tick> t = linear_ticks(0.0, 0.6, 6);
  REQUIRE(t.size() == 7);
  CHECK(t[0].label == "0");
  CHECK(t[1].label == "0.1");
  CHECK(t[6].label == "0.6");
}

TEST_CASE("Axis maps data to pixels linearly or in log10, and back", "[outputs][svg]") {
  Axis a;
  a.lo = 0.0;
  a.hi = 10.0;
  a.p0 = 100.0;
  a.p1 = 300.0;
  CHECK(a.map(2.5) == Approx(150.0));
  CHECK(a.map(-5.0) == Approx(0.0));  // outside the range maps outside the pixels
  CHECK(a.unmap(150.0) == Approx(2.5));
  Axis y;  // a y axis runs backwards
  y.lo = -1.0;
  y.hi = 1.0;
  y.p0 = 200.0;
  y.p1 = 0.0;
  CHECK(y.map(0.5) == Approx(50.0));
  Axis l;
  l.log = true;
  l.lo = 1.0;
  l.hi = 1000.0;
  l.p0 = 0.0;
  l.p1 = 300.0;
  CHECK(l.map(10.0) == Approx(100.0));
  CHECK(l.map(std::sqrt(10.0)) == Approx(50.0));
  CHECK(l.unmap(200.0) == Approx(100.0));
  CHECK(std::isnan(l.map(0.0)));
  CHECK(std::isnan(l.map(-3.0)));
  CHECK(std::isnan(a.map(NAN)));
  CHECK(l.ticks().size() == 4 + 24);  // 1, 10, 100, 1000 and 2..9, 20..90, 200..900
}

TEST_CASE("fixed ticks: exactly the given values inside the range, labelled", "[outputs][svg]") {
  Axis a;
  a.lo = 5.0;
  a.hi = 50.0;
  a.log = true;
  a.fixed_ticks = {40.0, 10.0, 20.0, 80.0};  // 80 is outside
  const std::vector<Tick> t = a.ticks();
  REQUIRE(t.size() == 3);
  CHECK(t[0].value == 10.0);
  CHECK(t[0].label == "10");
  CHECK(t[2].label == "40");
  for (const Tick& k : t) CHECK(k.major);
  // Many values: every k-th labelled (at most about 2 x target_ticks labels).
  Axis b;
  b.lo = 0.0;
  b.hi = 100.0;
  for (int i = 0; i <= 100; ++i) b.fixed_ticks.push_back(i);
  int labelled = 0;
  for (const Tick& k : b.ticks()) labelled += !k.label.empty();
  CHECK(labelled <= 2 * b.target_ticks + 1);
  CHECK(labelled >= b.target_ticks);
}
