// A measured frequency response (network analyser or swept sine): frequencies, magnitudes and
// unwrapped phases read from a CSV file, with interpolation on a log-frequency axis.
#pragma once

#include <istream>
#include <stdexcept>
#include <string>
#include <vector>

#include "polewright/model/types.hpp"
#include "polewright/model/zpk.hpp"

namespace pw {

// A bad data file: the message names the file, the line and the column ("bench.csv: line 12,
// column phase_deg: ...").
class MeasuredDataError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

struct MeasuredReadOptions {
  // Units of a column headed only "frequency" or "magnitude": "hz" / "rad/s", "db" / "ratio".
  // Empty: the header must carry the unit (frequency_hz, frequency_rad_s, magnitude_db,
  // magnitude_ratio); a unit in the header wins when both are given and agree, and a clash is an error.
  std::string frequency_unit;
  std::string magnitude_unit;
  int min_points = 8;
  // After unwrapping every step between neighbouring points lies within (-180, 180]; a step larger
  // than this is ambiguous (the sweep is too coarse to tell the direction) and is an error.
  double max_phase_step_deg = 150.0;
};

struct MeasuredResponse {
  std::vector<double> w_rad_s;     // strictly ascending, positive
  std::vector<double> log_mag;     // natural log of |G|
  std::vector<double> phase_rad;   // unwrapped
  std::vector<double> coherence;   // empty when the file has none, else one per point in [0, 1]
  std::string source;              // file name for messages

  size_t size() const { return w_rad_s.size(); }
  double w_min() const { return w_rad_s.front(); }
  double w_max() const { return w_rad_s.back(); }
  // G(jw): log magnitude and phase interpolated linearly in log w; outside the measured range the
  // end values are held (callers should stay inside).
  Complex at(double w) const;
  // The measured point i as a complex number.
  Complex point(size_t i) const;
};

// Reads the CSV text: one header line (comma-separated column names), then one row per point;
// blank lines and lines starting with '#' are skipped. Columns: frequency, magnitude, phase (deg),
// optional coherence, in any order; other columns are ignored.
MeasuredResponse read_measured_csv(std::istream& in, const std::string& source, const MeasuredReadOptions& options);
MeasuredResponse read_measured_file(const std::string& path, const MeasuredReadOptions& options);

// Unwraps phases in degrees so each step lies within (-180, 180]. Returns the index of the first
// step larger than max_step_deg after unwrapping, or -1.
int unwrap_phase_deg(std::vector<double>& phase_deg, double max_step_deg);

// The data divided by C(jw) e^(-jw T) (a loop measured with the compensator in service gives the
// plant); the phase of C is followed continuously along the grid.
MeasuredResponse measured_divide(const MeasuredResponse& data, const Zpk& c, double delay_s = 0.0);
// The data multiplied by C(jw) e^(-jw T): the loop of a compensator with a measured plant.
MeasuredResponse measured_multiply(const MeasuredResponse& data, const Zpk& c, double delay_s = 0.0);

}  // namespace pw
