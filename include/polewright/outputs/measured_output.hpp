// What the outputs say about a measured plant: where its figures come from and how well the
// fitted model matches the data (JSON for check, design and retune; text lines for their tables).
#pragma once

#include <string>
#include <vector>

#include <nlohmann/json_fwd.hpp>

#include "polewright/model/measured_plant.hpp"
#include "polewright/model/plant.hpp"

namespace pw {

// {file, points, frequency_range_rad_s, coherence, measured_loop, figures_from, fit: {poles,
// zeros, gain, delay_s, rms_relative_error, reflected_poles, per_decade: [...], notes}}.
nlohmann::json measured_plant_json(const MeasuredPlant& m);

// Text lines for every measured plant of `plants` (none when there is no measured plant): the
// data, which figures come from the data and which from the fit, the fit and its error per decade.
std::vector<std::string> measured_plant_lines(const std::vector<Plant>& plants);

// The same lines joined with the given indent, each ending in a newline ("" without a measured plant).
std::string measured_plants_text(const std::vector<Plant>& plants, const std::string& indent = "");

}  // namespace pw
