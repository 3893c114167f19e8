// JSON renderings of the model and analysis values. Non-finite numbers never reach the JSON: they
// become null.
#pragma once

#include <optional>

#include <nlohmann/json_fwd.hpp>

#include "polewright/model/zpk.hpp"
#include "polewright/requirements/requirement_set.hpp"

namespace pw {

nlohmann::json json_number(double v);
nlohmann::json json_number(const std::optional<double>& v);
nlohmann::json json_number(const MetricValue& v);  // infinite -> null (listed as unbounded by the caller)
nlohmann::json json_complex(Complex c);
// {"gain", "zeros", "poles", "numerator", "denominator"}; roots in the spec encoding (a real
// root as a number, a conjugate pair once as {"re", "im"} with im > 0).
nlohmann::json json_zpk(const Zpk& z);

// A compensator C(s) for the results: json_zpk plus the other gain convention,
// "low_frequency_gain" (lim s^n C(s) as s -> 0, n = "integrators"); "gain" is the zero-pole gain.
nlohmann::json json_compensator(const Zpk& c);
// The PID reading of a compensator (model/pid_form.hpp): {"shape", "parallel": {kp, ki, kd, tf_s},
// "standard": {k, ti_s, td_s, n} or null}, or null when the compensator is not a P, PI, PD or PID.
nlohmann::json json_pid_form(const Zpk& c);
// One line: "PID: Kp 0.72, Ki 0.6 /s, Kd 0.114 s, Tf 0.05 s; K 0.72, Ti 1.2 s, Td 0.158 s, N 3.17"
// (empty when not a PID, and for a pure gain: a P needs no line of its own).
std::string pid_form_text(const Zpk& c);

// The two gain conventions, named, for the text and HTML tables:
//   zero-pole gain      k of C(s) = k prod(s - z_i) / prod(s - p_i) (the leading coefficient),
//   low-frequency gain  lim s^n C(s) as s -> 0, n = integrators (the Bode or DC gain; the factor in
//                       front when every other factor is written (s / w + 1)).
extern const char* const kGainConvention;
// "zero-pole gain 1423, low-frequency gain 165.6" (digits as fmt_number's default).
std::string gains_text(const Zpk& c);

// The cautions every report carries.
extern const char* const kCautions;

}  // namespace pw
