// Compares the discretisation with scipy (tests/reference/make_discrete_fixture.py, Debian
// python3-scipy 1.10): scipy.signal.cont2discrete(method="bilinear") (cross-checked there against
// scipy.signal.bilinear) for Tustin, cont2discrete(method="zoh") for the zero-order hold, and
// scipy.signal.dlsim impulse and step responses of the Tustin transfer function for the biquad
// cascade. Coefficients agree to 1e-9 of the largest coefficient; responses to 1e-9 of the largest sample.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>

#include "polewright/model/biquad.hpp"
#include "polewright/model/discretize.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;
using nlohmann::json;

namespace {

std::string discrete_fixture_path() {
  if (const char* p = std::getenv("POLEWRIGHT_DISCRETE_FIXTURE")) return p;
  return std::string(POLEWRIGHT_SOURCE_DIR) + "/tests/reference/discrete_fixture.json";
}

// Ours (num scaled by 1 / den[0], den monic) left-padded to scipy's length, then compared.
void same_polynomial(const char* what, const Poly& ours, const json& ref) {
  INFO(what);
  const std::vector<double> r = ref.get<std::vector<double>>();
  REQUIRE(ours.size() <= r.size());
  std::vector<double> o(r.size() - ours.size(), 0.0);
  o.insert(o.end(), ours.begin(), ours.end());
  double scale = 0.0;
  for (double c : r) scale = std::max(scale, std::abs(c));
  for (size_t i = 0; i < r.size(); ++i) {
    INFO("coefficient " << i << ": ours " << o[i] << ", scipy " << r[i]);
    CHECK(std::abs(o[i] - r[i]) <= 1e-9 * scale);
  }
}

void same_samples(const char* what, const std::vector<double>& ours, const json& ref) {
  INFO(what);
  const std::vector<double> r = ref.get<std::vector<double>>();
  REQUIRE(ours.size() == r.size());
  double scale = 0.0;
  for (double c : r) scale = std::max(scale, std::abs(c));
  for (size_t i = 0; i < r.size(); ++i) {
    INFO("sample " << i);
    CHECK(std::abs(ours[i] - r[i]) <= 1e-9 * scale);
  }
}

}  // namespace

TEST_CASE("Tustin and ZOH coefficients and the cascade agree with scipy", "[discrete_fixture]") {
  const json doc = read_json_file(discrete_fixture_path());
  REQUIRE(doc.at("cases").size() >= 5);
  for (const json& c : doc.at("cases")) {
    const std::string name = c.at("name");
    INFO("case " << name);
    const Zpk comp = parse_compensator(c.at("compensator"), "$.compensator");
    DiscretizeOptions o;
    o.sample_time_s = c.at("sample_time_s");
    o.method = DiscreteMethod::Tustin;
    const Zpk t = discretize(comp, o);
    same_polynomial("tustin numerator", zpk_numerator(t), c.at("tustin").at("num"));
    same_polynomial("tustin denominator", zpk_denominator(t), c.at("tustin").at("den"));
    o.method = DiscreteMethod::Zoh;
    const Zpk z = discretize(comp, o);
    same_polynomial("zoh numerator", zpk_numerator(z), c.at("zoh").at("num"));
    same_polynomial("zoh denominator", zpk_denominator(z), c.at("zoh").at("den"));

    const BiquadCascade bq = biquad_cascade(t);
    const size_t n = c.at("tustin_impulse").size();
    std::vector<double> impulse(n, 0.0), step(n, 1.0);
    impulse[0] = 1.0;
    same_samples("impulse response", cascade_filter(bq, impulse), c.at("tustin_impulse"));
    same_samples("step response", cascade_filter(bq, step), c.at("tustin_step"));
  }
}
