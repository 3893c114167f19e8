#include "polewright/outputs/measured_output.hpp"

#include <cmath>
#include <cstdio>

#include <nlohmann/json.hpp>

#include "polewright/model/zpk.hpp"
#include "polewright/outputs/json_values.hpp"

namespace pw {

namespace {

// printf into a string, any arguments (the lines here mix names, counts and figures).
template <class... A>
std::string fmt(const char* pattern, A... a) {
  char buf[512];
  std::snprintf(buf, sizeof buf, pattern, a...);
  return buf;
}

const char* const kFiguresFrom =
    "margins, crossovers, bandwidth, |S| and |C S| from the measured points (interpolated on log frequency); the closed-loop "
    "poles, the root locus, the step, the steady state, the disturbance steps and the gain interval from the fitted model";

}  // namespace

nlohmann::json measured_plant_json(const MeasuredPlant& m) {
  nlohmann::json j;
  j["file"] = m.file.empty() ? nlohmann::json(nullptr) : nlohmann::json(m.file);
  j["points"] = m.data.size();
  j["frequency_range_rad_s"] = {json_number(m.data.w_min()), json_number(m.data.w_max())};
  j["coherence"] = !m.data.coherence.empty();
  j["measured_loop"] = m.from_loop;
  j["figures_from"] = kFiguresFrom;
  const RationalFit& f = m.fit;
  nlohmann::json decades = nlohmann::json::array();
  for (const DecadeFitError& d : f.per_decade)
    decades.push_back({{"frequency_range_rad_s", {json_number(d.w_lo), json_number(d.w_hi)}},
                       {"points", d.points},
                       {"rms_magnitude_db", json_number(d.rms_magnitude_db)},
                       {"rms_phase_deg", json_number(d.rms_phase_deg)}});
  const nlohmann::json z = json_zpk(f.model);
  j["fit"] = {{"gain", z["gain"]},
              {"zeros", z["zeros"]},
              {"poles", z["poles"]},
              {"delay_s", json_number(f.delay_s)},
              {"rms_relative_error", json_number(f.rms_relative_error)},
              {"reflected_poles", f.reflected_poles},
              {"per_decade", decades},
              {"notes", f.notes}};
  return j;
}

std::vector<std::string> measured_plant_lines(const std::vector<Plant>& plants) {
  std::vector<std::string> out;
  bool any = false;
  for (const Plant& p : plants) {
    if (!p.measured) continue;
    any = true;
    const MeasuredPlant& m = *p.measured;
    const RationalFit& f = m.fit;
    out.push_back(fmt("%s: measured, %zu points over %.4g .. %.4g rad/s%s%s%s", p.name.c_str(), m.data.size(), m.data.w_min(),
                      m.data.w_max(), m.file.empty() ? "" : (" from " + m.file).c_str(),
                      m.data.coherence.empty() ? "" : ", with coherence",
                      m.from_loop ? " (a loop measurement divided by the compensator in service)" : ""));
    out.push_back(fmt("  fitted model: %zu poles, %zu zeros, %s, rms error %.3g %% of |G|%s",
                      f.model.poles.size(), f.model.zeros.size(),
                      f.delay_s > 0.0 ? fmt("dead time %.4g s", f.delay_s).c_str() : "no dead time", 100.0 * f.rms_relative_error,
                      f.reflected_poles > 0 ? fmt(", %d unstable pole(s) reflected", f.reflected_poles).c_str() : ""));
    out.push_back("  G(s) = " + zpk_to_string(f.model));
    std::string decades = "  fit error per decade:";
    for (const DecadeFitError& d : f.per_decade)
      decades += fmt(" [%.3g, %.3g) %.2g dB %.2g deg;", d.w_lo, d.w_hi, d.rms_magnitude_db, d.rms_phase_deg);
    if (!f.per_decade.empty()) decades.pop_back();
    out.push_back(decades);
    for (const std::string& n : f.notes) out.push_back("  fit note: " + n);
  }
  if (any) out.push_back(std::string("figures of measured plants: ") + kFiguresFrom);
  return out;
}

std::string measured_plants_text(const std::vector<Plant>& plants, const std::string& indent) {
  std::string s;
  for (const std::string& l : measured_plant_lines(plants)) s += indent + l + "\n";
  return s;
}

}  // namespace pw
