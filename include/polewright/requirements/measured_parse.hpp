// The `measured` plant entry: a frequency response read from a CSV file (named relative to the
// spec) or given inline, and the rational model fitted to it.
#pragma once

#include <memory>
#include <optional>
#include <string>

#include <nlohmann/json_fwd.hpp>

#include "polewright/model/measured_plant.hpp"
#include "polewright/model/zpk.hpp"

namespace pw {

// Reads a spec file and inlines its measured data (inline_measured_files with the spec's folder).
nlohmann::json read_spec_file(const std::string& path);

// Reads a sweep file and inlines the measured data of its base spec ($.base), relative to the sweep
// file's folder.
nlohmann::json read_sweep_file(const std::string& path);

// For $.plant and each $.plant.variants[i] whose `measured` names a `file` and carries no `data`:
// reads the CSV (path relative to base_dir unless absolute) and writes its points into
// `measured.data` (rad/s, magnitude ratio, unwrapped phase in degrees, coherence when given), so
// the spec stands on its own: results embed it, sweeps and re-checks parse it without the file.
// A bad file is a SpecError at `<plant path>.measured.file` whose message names the line and column.
// `root` is the JSON path of `doc` ("$" for a spec, "$.spec" for the spec inside a sweep file).
void inline_measured_files(nlohmann::json& doc, const std::string& base_dir, const std::string& root = "$");

// The `measured` object at `path` (with `data` inlined). `current` is the compensator in service
// when `from_loop` is true (the data are then the open loop and are divided by it).
std::shared_ptr<const MeasuredPlant> parse_measured(const nlohmann::json& j, const std::string& path, const Zpk* current,
                                                    bool from_loop);

}  // namespace pw
