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

// The cautions every report carries.
extern const char* const kCautions;

}  // namespace pw
