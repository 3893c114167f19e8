#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/outputs/json_values.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

TEST_CASE("non-finite numbers become null", "[outputs][json_values]") {
  CHECK(json_number(NAN).is_null());
  CHECK(json_number(INFINITY).is_null());
  CHECK(json_number(std::optional<double>()).is_null());
  CHECK(json_number(2.5) == 2.5);
  MetricValue inf;
  inf.infinite = true;
  CHECK(json_number(inf).is_null());
  CHECK(json_complex(Complex(1, -2)).at("im") == -2.0);
}

TEST_CASE("a compensator written as JSON reads back as the same compensator", "[outputs][json_values]") {
  Zpk c;
  c.gain = 12;
  c.zeros = {Complex(-4, 0), Complex(-3, 59.9), Complex(-3, -59.9)};
  c.poles = {Complex(-40, 0), Complex(-42, 42.8), Complex(-42, -42.8)};
  nlohmann::json j = json_zpk(c);
  CHECK(j.at("numerator").size() == 4);
  CHECK(j.at("denominator").at(0) == 1.0);
  j.erase("numerator");
  j.erase("denominator");
  const Zpk back = parse_compensator(j, "$");
  REQUIRE(back.zeros.size() == 3);
  const Complex s(0.5, 7.0);
  CHECK(std::abs(back.evaluate(s) - c.evaluate(s)) < 1e-12 * std::abs(c.evaluate(s)));
  CHECK(std::string(kCautions).find("real plant") != std::string::npos);
}

TEST_CASE("a compensator carries both gains, named", "[outputs][json_values]") {
  // 21.78 (s + 0.8149) / s (issue 17's PI): zero-pole gain 21.78; low-frequency gain
  // lim s C(s) = 21.78 * 0.8149 = 17.748522 (closed form), one integrator.
  Zpk pi;
  pi.gain = 21.78;
  pi.zeros = {Complex(-0.8149, 0)};
  pi.poles = {Complex(0, 0)};
  const nlohmann::json j = json_compensator(pi);
  CHECK(j.at("gain") == 21.78);
  CHECK(j.at("low_frequency_gain").get<double>() == Approx(17.748522).epsilon(1e-12));
  CHECK(j.at("integrators") == 1);
  CHECK(gains_text(pi) == "zero-pole gain 21.78, low-frequency gain 17.75");
  // A lead 4.68 (s + 2.9) / (s + 5.4): DC gain 4.68 * 2.9 / 5.4 = 2.5133 (closed form), no integrator.
  Zpk lead;
  lead.gain = 4.68;
  lead.zeros = {Complex(-2.9, 0)};
  lead.poles = {Complex(-5.4, 0)};
  CHECK(json_compensator(lead).at("low_frequency_gain").get<double>() == Approx(4.68 * 2.9 / 5.4).epsilon(1e-12));
  CHECK(json_compensator(lead).at("integrators") == 0);
  CHECK(std::string(kGainConvention).find("zero-pole gain = k of") != std::string::npos);
  CHECK(std::string(kGainConvention).find("low-frequency gain = lim s^n C(s)") != std::string::npos);
}

TEST_CASE("the PID reading of a compensator, as JSON and as one line", "[outputs][json_values][pid]") {
  // 3 (s + 1)(s + 4) / (s (s + 20)): Kp 0.72, Ki 0.6, Kd 0.114, Tf 0.05 by hand (see
  // tests/model/test_pid_form.cpp), so K 0.72, Ti 1.2 s, Td 0.1583 s, N 3.167.
  const Zpk c{{-1.0, -4.0}, {0.0, -20.0}, 3.0};
  const nlohmann::json j = json_pid_form(c);
  CHECK(j.at("shape") == "PID");
  CHECK(j.at("parallel").at("kp").get<double>() == Approx(0.72));
  CHECK(j.at("parallel").at("tf_s").get<double>() == Approx(0.05));
  CHECK(j.at("standard").at("ti_s").get<double>() == Approx(1.2));
  CHECK(j.at("standard").at("n").get<double>() == Approx(0.114 / 0.72 / 0.05));
  CHECK(pid_form_text(c) == "PID form: Kp 0.72, Ki 0.6 /s, Kd 0.114 s, Tf 0.05 s; K 0.72, Ti 1.2 s, Td 0.1583 s, N 3.167");
  // A PI has no derivative terms and a null-free standard form; a lag is no PID at all.
  const nlohmann::json pi = json_pid_form(Zpk{{-0.5}, {0.0}, 4.0});
  CHECK(pi.at("shape") == "PI");
  CHECK(pi.at("standard").at("ti_s").get<double>() == Approx(2.0));
  CHECK(pid_form_text(Zpk{{-0.5}, {0.0}, 4.0}) == "PI form: Kp 4, Ki 2 /s; K 4, Ti 2 s");
  CHECK(json_pid_form(Zpk{{-1.0}, {-0.1}, 0.1}).is_null());
  CHECK(pid_form_text(Zpk{{-1.0}, {-0.1}, 0.1}).empty());
  CHECK(pid_form_text(Zpk{{}, {}, 3.0}).empty());  // a pure gain: its P reading needs no line
  CHECK(json_pid_form(Zpk{{}, {}, 3.0}).at("shape") == "P");
  // A pure integral controller has no standard form.
  const nlohmann::json i = json_pid_form(Zpk{{}, {0.0}, 2.0});
  CHECK(i.at("shape") == "PI");
  CHECK(i.at("standard").is_null());
}
