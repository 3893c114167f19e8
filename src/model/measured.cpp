#include "polewright/model/measured.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <fstream>
#include <sstream>

namespace pw {

namespace {

std::string trim_lower(const std::string& s) {
  size_t a = 0, b = s.size();
  while (a < b && std::isspace(static_cast<unsigned char>(s[a]))) ++a;
  while (b > a && std::isspace(static_cast<unsigned char>(s[b - 1]))) --b;
  std::string o = s.substr(a, b - a);
  for (char& c : o) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  // A quoted header cell: drop the quotes.
  if (o.size() >= 2 && o.front() == '"' && o.back() == '"') o = o.substr(1, o.size() - 2);
  return o;
}

std::vector<std::string> split(const std::string& line) {
  std::vector<std::string> cells;
  std::string cell;
  std::istringstream ss(line);
  while (std::getline(ss, cell, ',')) cells.push_back(cell);
  if (!line.empty() && line.back() == ',') cells.emplace_back();
  return cells;
}

enum class Unit { kNone, kHz, kRadS, kDb, kRatio, kDeg };

struct Column {
  int index = -1;
  std::string name;  // as written in the header, for messages
  Unit unit = Unit::kNone;
};

[[noreturn]] void fail(const std::string& source, int line, const std::string& column, const std::string& what) {
  std::ostringstream m;
  m << source << ": line " << line;
  if (!column.empty()) m << ", column " << column;
  m << ": " << what;
  throw MeasuredDataError(m.str());
}

Unit unit_from_key(const std::string& key, bool frequency, const std::string& source) {
  const std::string k = trim_lower(key);
  if (k.empty()) return Unit::kNone;
  if (frequency && (k == "hz")) return Unit::kHz;
  if (frequency && (k == "rad/s" || k == "rad_s")) return Unit::kRadS;
  if (!frequency && k == "db") return Unit::kDb;
  if (!frequency && k == "ratio") return Unit::kRatio;
  throw MeasuredDataError(source + ": " + (frequency ? "frequency" : "magnitude") + " unit \"" + key + "\" is not one of " +
                          (frequency ? "hz, rad/s" : "db, ratio"));
}

double parse_number(const std::string& cell, const std::string& source, int line, const std::string& column) {
  const std::string t = trim_lower(cell);
  if (t.empty()) fail(source, line, column, "empty cell");
  char* end = nullptr;
  const double v = std::strtod(t.c_str(), &end);
  if (end != t.c_str() + t.size()) fail(source, line, column, "\"" + t + "\" is not a number");
  if (!std::isfinite(v)) fail(source, line, column, "value is not finite (" + t + ")");
  return v;
}

}  // namespace

int unwrap_phase_deg(std::vector<double>& p, double max_step_deg) {
  int bad = -1;
  for (size_t i = 1; i < p.size(); ++i) {
    double d = std::fmod(p[i] - p[i - 1], 360.0);
    if (d > 180.0) d -= 360.0;
    if (d <= -180.0) d += 360.0;
    p[i] = p[i - 1] + d;
    if (bad < 0 && std::abs(d) > max_step_deg) bad = static_cast<int>(i);
  }
  return bad;
}

MeasuredResponse read_measured_csv(std::istream& in, const std::string& source, const MeasuredReadOptions& opt) {
  const Unit key_f = unit_from_key(opt.frequency_unit, true, source);
  const Unit key_m = unit_from_key(opt.magnitude_unit, false, source);
  Column fcol, mcol, pcol, ccol;
  std::string line;
  int line_no = 0;
  bool have_header = false;
  std::vector<double> f, mag, ph, coh;
  std::vector<int> lines;
  size_t columns = 0;
  while (std::getline(in, line)) {
    ++line_no;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    const std::string t = trim_lower(line);
    if (t.empty() || t[0] == '#') continue;
    const std::vector<std::string> cells = split(line);
    if (!have_header) {
      have_header = true;
      columns = cells.size();
      for (size_t i = 0; i < cells.size(); ++i) {
        const std::string raw = trim_lower(cells[i]);
        std::string name = raw;
        // "frequency [hz]", "frequency (rad/s)" and "frequency_hz" all carry a unit.
        for (const char* cut : {" [", " (", "[", "("}) {
          const size_t at = name.find(cut);
          if (at != std::string::npos) {
            std::string u = name.substr(at + std::string(cut).size());
            if (!u.empty() && (u.back() == ']' || u.back() == ')')) u.pop_back();
            name = name.substr(0, at) + "_" + u;
            break;
          }
        }
        auto take = [&](Column& c, Unit u) {
          if (c.index >= 0) fail(source, line_no, cells[i], "a second " + raw.substr(0, raw.find_first_of("_ [(")) + " column");
          c.index = static_cast<int>(i);
          c.name = trim_lower(cells[i]);
          c.unit = u;
        };
        if (name == "frequency_hz" || name == "freq_hz" || name == "hz") take(fcol, Unit::kHz);
        else if (name == "frequency_rad/s" || name == "frequency_rad_s" || name == "freq_rad_s" || name == "rad/s" || name == "w_rad_s") take(fcol, Unit::kRadS);
        else if (name == "frequency" || name == "freq") take(fcol, Unit::kNone);
        else if (name == "magnitude_db" || name == "mag_db" || name == "gain_db") take(mcol, Unit::kDb);
        else if (name == "magnitude_ratio" || name == "mag_ratio" || name == "gain_ratio") take(mcol, Unit::kRatio);
        else if (name == "magnitude" || name == "mag" || name == "gain") take(mcol, Unit::kNone);
        else if (name == "phase_deg" || name == "phase") take(pcol, Unit::kDeg);
        else if (name == "coherence") take(ccol, Unit::kNone);
      }
      if (fcol.index < 0) fail(source, line_no, "", "the header has no frequency column (frequency_hz, frequency_rad_s or frequency)");
      if (mcol.index < 0) fail(source, line_no, "", "the header has no magnitude column (magnitude_db, magnitude_ratio or magnitude)");
      if (pcol.index < 0) fail(source, line_no, "", "the header has no phase column (phase_deg)");
      for (auto [col, key] : {std::pair<Column*, Unit>{&fcol, key_f}, {&mcol, key_m}}) {
        if (col->unit == Unit::kNone) {
          if (key == Unit::kNone) fail(source, line_no, col->name, "no unit in the header and none given by the spec");
          col->unit = key;
        } else if (key != Unit::kNone && key != col->unit) {
          fail(source, line_no, col->name, "the header's unit disagrees with the unit given by the spec");
        }
      }
      continue;
    }
    if (cells.size() != columns)
      fail(source, line_no, "", std::to_string(cells.size()) + " cells where the header has " + std::to_string(columns));
    const double fv = parse_number(cells[fcol.index], source, line_no, fcol.name);
    const double mv = parse_number(cells[mcol.index], source, line_no, mcol.name);
    const double pv = parse_number(cells[pcol.index], source, line_no, pcol.name);
    if (!(fv > 0.0)) fail(source, line_no, fcol.name, "frequency must be positive");
    if (!f.empty() && !(fv > f.back()))
      fail(source, line_no, fcol.name, "frequency does not increase (previous row " + std::to_string(lines.back()) + ")");
    if (mcol.unit == Unit::kRatio && !(mv > 0.0)) fail(source, line_no, mcol.name, "magnitude ratio must be positive");
    f.push_back(fv);
    mag.push_back(mcol.unit == Unit::kDb ? mv * std::log(10.0) / 20.0 : std::log(mv));
    ph.push_back(pv);
    lines.push_back(line_no);
    if (ccol.index >= 0) {
      const double cv = parse_number(cells[ccol.index], source, line_no, ccol.name);
      if (cv < 0.0 || cv > 1.0) fail(source, line_no, ccol.name, "coherence must lie within 0..1");
      coh.push_back(cv);
    }
  }
  if (!have_header) fail(source, line_no, "", "no header line (the file is empty)");
  if (static_cast<int>(f.size()) < opt.min_points)
    fail(source, line_no, "", std::to_string(f.size()) + " data rows, fewer than the " + std::to_string(opt.min_points) + " needed");
  const int bad = unwrap_phase_deg(ph, opt.max_phase_step_deg);
  if (bad >= 0) {
    std::ostringstream m;
    m << "phase changes by " << std::abs(ph[bad] - ph[bad - 1]) << " deg from the previous row even after unwrapping (more than "
      << opt.max_phase_step_deg << "): the sweep is too coarse here to tell which way the phase turns";
    fail(source, lines[bad], pcol.name, m.str());
  }
  MeasuredResponse r;
  r.source = source;
  const double fscale = fcol.unit == Unit::kHz ? 2.0 * M_PI : 1.0;
  for (double v : f) r.w_rad_s.push_back(v * fscale);
  r.log_mag = std::move(mag);
  for (double v : ph) r.phase_rad.push_back(v * M_PI / 180.0);
  r.coherence = std::move(coh);
  return r;
}

MeasuredResponse read_measured_file(const std::string& path, const MeasuredReadOptions& opt) {
  std::ifstream in(path);
  if (!in) throw MeasuredDataError(path + ": cannot be opened");
  return read_measured_csv(in, path, opt);
}

Complex MeasuredResponse::point(size_t i) const { return std::polar(std::exp(log_mag[i]), phase_rad[i]); }

Complex MeasuredResponse::at(double w) const {
  const size_t n = w_rad_s.size();
  if (!(w > w_rad_s.front())) return point(0);
  if (!(w < w_rad_s.back())) return point(n - 1);
  const size_t hi = static_cast<size_t>(std::upper_bound(w_rad_s.begin(), w_rad_s.end(), w) - w_rad_s.begin());
  const size_t lo = hi - 1;
  const double t = std::log(w / w_rad_s[lo]) / std::log(w_rad_s[hi] / w_rad_s[lo]);
  const double lm = log_mag[lo] + t * (log_mag[hi] - log_mag[lo]);
  const double ph = phase_rad[lo] + t * (phase_rad[hi] - phase_rad[lo]);
  return std::polar(std::exp(lm), ph);
}

namespace {

MeasuredResponse combine(const MeasuredResponse& d, const Zpk& c, double delay_s, double sign) {
  MeasuredResponse r = d;
  double prev = 0.0;
  for (size_t i = 0; i < d.size(); ++i) {
    const double w = d.w_rad_s[i];
    const Complex v = c.evaluate(Complex(0.0, w));
    if (!(std::abs(v) > 0.0) || !std::isfinite(std::abs(v)))
      throw MeasuredDataError(d.source + ": the compensator has a zero or a pole on the measured grid (at " + std::to_string(w) +
                              " rad/s)");
    double ph = std::arg(v);
    if (i > 0) {
      // Follow the compensator's phase continuously (its own steps are small on a measured grid).
      while (ph - prev > M_PI) ph -= 2.0 * M_PI;
      while (ph - prev <= -M_PI) ph += 2.0 * M_PI;
    }
    prev = ph;
    r.log_mag[i] += sign * std::log(std::abs(v));
    r.phase_rad[i] += sign * (ph - w * delay_s);
  }
  return r;
}

}  // namespace

MeasuredResponse measured_divide(const MeasuredResponse& d, const Zpk& c, double delay_s) {
  if (c.gain == 0.0) throw MeasuredDataError(d.source + ": cannot divide by a compensator of zero gain");
  return combine(d, c, delay_s, -1.0);
}

MeasuredResponse measured_multiply(const MeasuredResponse& d, const Zpk& c, double delay_s) {
  return combine(d, c, delay_s, 1.0);
}

}  // namespace pw
