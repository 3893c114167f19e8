// The export's outputs: C99 code, the sections as JSON and CSV, and the side-by-side text report.
#pragma once

#include <string>

#include <nlohmann/json_fwd.hpp>

#include "polewright/jobs/export.hpp"

namespace pw {

// A C identifier from a file name: the base name without folders and extension, each run of bytes
// outside ASCII [A-Za-z0-9_] (spaces, dashes, dots, UTF-8) replaced by one '_', prefixed with "pw_"
// when it starts with a digit or an underscore; "compensator" when nothing is left.
std::string c_identifier(const std::string& path);

// Why a header's file name (no folders) cannot be written in #include "...", or "" when it can.
std::string c_header_file_error(const std::string& file);

// The sign of lim (z - 1)^n Cd(z) at z -> 1 (n = poles at z = 1): the direction in which a
// positive error drives the integrator; +1 or -1.
int integrator_sign(const Zpk& discrete);

// "%.17g" (double) or "%.9g" with an "f" suffix (float), always with a decimal point or exponent.
std::string c_literal(double v, Precision p);

// NAME.h and NAME.c for the cascade (state struct, init, reset, step; optional clamp with
// conditional integration for the integrator sections).
// `name` is the C identifier; the files are named as given (file, header_file: base names without
// folders, default name + ".h" / ".c"); the source includes header_file.
std::string export_c_header(const ExportReport& r, const std::string& name, const std::string& file = "");
std::string export_c_source(const ExportReport& r, const std::string& name, const std::string& header_file = "",
                            const std::string& file = "");

// {"sample_time_s", "method", "gain", "sections": [{"b": [...], "a": [1, a1, a2]}], ...}, keys in
// that order, then the further keys.
nlohmann::ordered_json export_json(const ExportReport& r);

// Comment lines (#), a header, the gain as section 0 (b = [g, 0, 0], a = [1, 0, 0]), then the sections.
std::string export_csv(const ExportReport& r);

// Continuous and discrete figures side by side, the sections, warnings, notes and cautions.
std::string export_text(const ExportReport& r);

}  // namespace pw
