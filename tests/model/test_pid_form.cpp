#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/model/pid_form.hpp"

using namespace pw;

namespace {
Complex parallel_at(const PidParallel& p, Complex s) {
  Complex c = p.kp;
  if (p.ki != 0.0) c += p.ki / s;
  if (p.kd != 0.0) c += p.kd * s / (p.tf * s + 1.0);
  return c;
}
}  // namespace

TEST_CASE("pid_form of a filtered PID agrees with the transfer function at every frequency", "[model][pid]") {
  // 3 (s + 1)(s + 4) / (s (s + 20)): by hand, Tf = 1/20; the numerator over s (Tf s + 1) is
  // 0.15 (s^2 + 5 s + 4) = 0.6 + 0.75 s + 0.15 s^2, so Ki = 0.6, Kp = 0.75 - 0.6 / 20 = 0.72,
  // Kd = 0.15 - 0.72 / 20 = 0.114.
  const Zpk c{{-1.0, -4.0}, {0.0, -20.0}, 3.0};
  const auto f = pid_form(c);
  REQUIRE(f);
  CHECK(f->shape == PidShape::PID);
  CHECK(f->parallel.tf == Approx(0.05).epsilon(1e-14));
  CHECK(f->parallel.ki == Approx(0.6).epsilon(1e-13));
  CHECK(f->parallel.kp == Approx(0.72).epsilon(1e-13));
  CHECK(f->parallel.kd == Approx(0.114).epsilon(1e-13));
  for (double w : {0.01, 0.3, 1.0, 7.0, 50.0, 1e4}) {
    const Complex s(0.0, w);
    CHECK(std::abs(parallel_at(f->parallel, s) - c.evaluate(s)) <= 1e-12 * std::abs(c.evaluate(s)));
  }
  REQUIRE(f->standard);
  CHECK(f->standard->k == Approx(0.72));
  CHECK(f->standard->ti == Approx(0.72 / 0.6));
  CHECK(f->standard->td == Approx(0.114 / 0.72));
  CHECK(f->standard->n == Approx(0.114 / 0.72 / 0.05));
}

TEST_CASE("pid_form and zpk_from_pid round trip", "[model][pid]") {
  for (const PidParallel p : {PidParallel{2.0, 3.0, 0.5, 0.05}, PidParallel{1.5, 0.2, 0.0, 0.0},
                              PidParallel{0.8, 0.0, 0.3, 0.01}, PidParallel{-2.0, -1.0, -0.4, 0.02}}) {
    const Zpk z = zpk_from_pid(p);
    const auto f = pid_form(z);
    REQUIRE(f);
    CHECK(f->parallel.kp == Approx(p.kp).epsilon(1e-12));
    CHECK(f->parallel.ki == Approx(p.ki).epsilon(1e-12).margin(1e-15));
    CHECK(f->parallel.kd == Approx(p.kd).epsilon(1e-12).margin(1e-15));
    CHECK(f->parallel.tf == Approx(p.tf).epsilon(1e-12).margin(1e-15));
    for (double w : {0.05, 1.0, 30.0}) CHECK(std::abs(z.evaluate({0.0, w}) - parallel_at(p, {0.0, w})) <= 1e-12 * std::abs(parallel_at(p, {0.0, w})));
  }
  // Reverse acting (all terms negative): the standard form's times stay positive.
  const auto neg = pid_form(zpk_from_pid({-2.0, -1.0, -0.4, 0.02}));
  REQUIRE(neg);
  REQUIRE(neg->standard);
  CHECK(neg->standard->k == Approx(-2.0));
  CHECK(neg->standard->ti == Approx(2.0));
  CHECK(neg->standard->td == Approx(0.2));
  CHECK(neg->standard->n == Approx(10.0));
}

TEST_CASE("a Ziegler-Nichols PID for 1/(s+1)^3, worked by hand, reads back in standard form", "[model][pid]") {
  // 1/(s + 1)^3 under proportional feedback: s^3 + 3 s^2 + 3 s + 1 + K has its Routh-Hurwitz limit
  // at K = 8 with poles at +-j sqrt(3) (analytic), so Ku = 8 and Tu = 2 pi / sqrt(3). The
  // ultimate-gain PID rule K = 0.6 Ku, Ti = Tu / 2, Td = Tu / 8 (Ziegler and Nichols, 1942, from
  // memory), with the derivative filter N = 10 (common practice). Worked by hand into
  // K (1 + 1/(Ti s) + Td s/(Td/N s + 1)) = (a2 s^2 + a1 s + a0) / (s (Tf s + 1)), Tf = Td / N:
  // a2 = K (Tf + Td), a1 = K (1 + Tf / Ti), a0 = K / Ti.
  const double ku = 8.0, tu = 2.0 * M_PI / std::sqrt(3.0);
  const double k = 0.6 * ku, ti = tu / 2.0, td = tu / 8.0, n = 10.0, tf = td / n;
  const Zpk c = zpk_from_polynomials({k * (tf + td), k * (1.0 + tf / ti), k / ti}, {tf, 1.0, 0.0});
  const auto f = pid_form(c);
  REQUIRE(f);
  CHECK(f->shape == PidShape::PID);
  REQUIRE(f->standard);
  CHECK(f->standard->k == Approx(4.8).epsilon(1e-12));
  CHECK(f->standard->ti == Approx(1.8137993642).epsilon(1e-9));  // pi / sqrt(3)
  CHECK(f->standard->td == Approx(0.4534498411).epsilon(1e-9));  // pi / (4 sqrt(3))
  CHECK(f->standard->n == Approx(10.0).epsilon(1e-12));
  CHECK(f->parallel.ki == Approx(4.8 / 1.8137993642).epsilon(1e-9));
  CHECK(f->parallel.kd == Approx(4.8 * 0.4534498411).epsilon(1e-9));
}

TEST_CASE("shapes: PI, PD with filter, P, complex PID zeros; and what is not a PID", "[model][pid]") {
  const auto pi = pid_form(Zpk{{-0.5}, {0.0}, 4.0});  // 4 (s + 0.5) / s = 4 + 2 / s
  REQUIRE(pi);
  CHECK(pi->shape == PidShape::PI);
  CHECK(pi->parallel.kp == Approx(4.0));
  CHECK(pi->parallel.ki == Approx(2.0));
  CHECK(pi->standard->ti == Approx(2.0));
  const auto pd = pid_form(Zpk{{-2.0}, {-20.0}, 10.0});  // a lead: 10 (s + 2)/(s + 20)
  REQUIRE(pd);
  CHECK(pd->shape == PidShape::PD);
  CHECK(pd->parallel.kp == Approx(1.0));        // the DC gain 10 * 2 / 20
  CHECK(pd->parallel.kd == Approx(0.45));       // Tf (k - Kp) = 0.05 * 9
  const auto p = pid_form(Zpk{{}, {}, 3.0});
  REQUIRE(p);
  CHECK(p->shape == PidShape::P);
  const auto cz = pid_form(Zpk{{Complex(-1.0, 2.0), Complex(-1.0, -2.0)}, {0.0, -10.0}, 1.0});
  REQUIRE(cz);  // (s^2 + 2 s + 5)/(s (s + 10)): Ki 0.5, Kp 0.15, Kd 0.085 by hand
  CHECK(cz->parallel.ki == Approx(0.5));
  CHECK(cz->parallel.kp == Approx(0.15));
  CHECK(cz->parallel.kd == Approx(0.085));
  CHECK_FALSE(pid_form(Zpk{{-0.5, -0.1}, {0.0, -0.01}, 2.0}));  // integrator + lag: Kd < 0
  CHECK_FALSE(pid_form(Zpk{{}, {-5.0}, 2.0}));                  // a low-pass alone
  CHECK_FALSE(pid_form(Zpk{{-1.0}, {-2.0, -3.0}, 2.0}));        // two poles off the origin
  CHECK_FALSE(pid_form(Zpk{{0.0}, {0.0, -3.0}, 2.0}));          // a zero at the origin
  CHECK_FALSE(pid_form(Zpk{{-1.0}, {0.0, 0.0}, 2.0}));          // a double integrator
  CHECK(std::string(pid_shape_name(PidShape::PID)) == "PID");
}
