#include "polewright/outputs/json_values.hpp"

#include "polewright/model/pid_form.hpp"

#include <cmath>

#include "text_table.hpp"
#include <nlohmann/json.hpp>

namespace pw {

const char* const kCautions =
    "Results rest on the model. Verify on the real plant, first at reduced gain, with limits, "
    "interlocks and emergency stops in place. Defer to local codes, machinery-safety standards and "
    "licensed engineering practice.";

nlohmann::json json_number(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr); }

nlohmann::json json_number(const std::optional<double>& v) { return v ? json_number(*v) : nlohmann::json(nullptr); }

nlohmann::json json_number(const MetricValue& v) { return json_number(v.value); }

nlohmann::json json_complex(Complex c) { return {{"re", json_number(c.real())}, {"im", json_number(c.imag())}}; }

nlohmann::json json_zpk(const Zpk& z) {
  nlohmann::json j;
  j["gain"] = json_number(z.gain);
  // Roots in the spec's own encoding: a real root as a number, a conjugate pair once as
  // {"re", "im"} with im > 0, so the zeros/poles/gain part reads back as a compensator object.
  auto roots = [](const Roots& rs) {
    nlohmann::json a = nlohmann::json::array();
    for (const Complex& r : rs) {
      if (r.imag() < 0.0) continue;
      a.push_back(r.imag() == 0.0 ? json_number(r.real()) : json_complex(r));
    }
    return a;
  };
  j["zeros"] = roots(z.zeros);
  j["poles"] = roots(z.poles);
  j["numerator"] = nlohmann::json::array();
  for (double c : zpk_numerator(z)) j["numerator"].push_back(json_number(c));
  j["denominator"] = nlohmann::json::array();
  for (double c : zpk_denominator(z)) j["denominator"].push_back(json_number(c));
  return j;
}

nlohmann::json json_compensator(const Zpk& c) {
  nlohmann::json j = json_zpk(c);
  j["low_frequency_gain"] = json_number(zpk_low_frequency_gain(c));
  j["integrators"] = zpk_integrators(c);
  return j;
}

nlohmann::json json_pid_form(const Zpk& c) {
  const std::optional<PidForm> f = pid_form(c);
  if (!f) return nullptr;
  nlohmann::json j;
  j["shape"] = pid_shape_name(f->shape);
  j["parallel"] = {{"kp", json_number(f->parallel.kp)}, {"ki", json_number(f->parallel.ki)},
                   {"kd", json_number(f->parallel.kd)}, {"tf_s", json_number(f->parallel.tf)}};
  if (f->standard) {
    const bool integral = f->parallel.ki != 0.0;
    j["standard"] = {{"k", json_number(f->standard->k)}, {"ti_s", integral ? json_number(f->standard->ti) : nlohmann::json(nullptr)},
                     {"td_s", json_number(f->standard->td)}, {"n", json_number(f->standard->n)}};
  } else {
    j["standard"] = nullptr;
  }
  return j;
}

std::string pid_form_text(const Zpk& c) {
  const std::optional<PidForm> f = pid_form(c);
  if (!f || f->shape == PidShape::P) return "";  // a pure gain needs no PID line
  const PidParallel& p = f->parallel;
  std::string out = std::string(pid_shape_name(f->shape)) + " form: Kp " + fmt_number(p.kp);
  if (p.ki != 0.0) out += ", Ki " + fmt_number(p.ki) + " /s";
  if (p.kd != 0.0) out += ", Kd " + fmt_number(p.kd) + " s, Tf " + fmt_number(p.tf) + " s";
  if (f->standard && (p.ki != 0.0 || p.kd != 0.0)) {
    out += "; K " + fmt_number(f->standard->k);
    if (p.ki != 0.0) out += ", Ti " + fmt_number(f->standard->ti) + " s";
    if (p.kd != 0.0) out += ", Td " + fmt_number(f->standard->td) + " s, N " + fmt_number(f->standard->n);
  }
  return out;
}

const char* const kGainConvention =
    "gains: zero-pole gain = k of k prod(s - z) / prod(s - p); low-frequency gain = lim s^n C(s) as s -> 0, "
    "n = integrators (the Bode gain)";

std::string gains_text(const Zpk& c) {
  return "zero-pole gain " + fmt_number(c.gain) + ", low-frequency gain " + fmt_number(zpk_low_frequency_gain(c));
}

}  // namespace pw
