#include <catch2/catch.hpp>

#include <cmath>
#include <sstream>

#include "polewright/model/measured.hpp"

#include "support/make_zpk.hpp"

using namespace pw;
using pw::test::make;

namespace {

MeasuredResponse read(const std::string& text, MeasuredReadOptions opt = {}) {
  std::istringstream in(text);
  return read_measured_csv(in, "bench.csv", opt);
}

std::string error_of(const std::string& text, MeasuredReadOptions opt = {}) {
  try {
    read(text, opt);
  } catch (const MeasuredDataError& e) {
    return e.what();
  }
  return "";
}

// Rows of 1/(s+1)^3 (analytic: |G| = (1 + w^2)^(-3/2), angle -3 atan w), phase wrapped into (-180, 180].
std::string third_order_rows(bool hz, bool db, int n = 30) {
  std::ostringstream o;
  o.precision(17);
  for (int i = 0; i < n; ++i) {
    const double w = std::pow(10.0, -1.0 + 3.0 * i / (n - 1));
    const double mag = std::pow(1.0 + w * w, -1.5);
    double ph = -3.0 * std::atan(w) * 180.0 / M_PI;
    if (ph <= -180.0) ph += 360.0;
    o << (hz ? w / (2 * M_PI) : w) << "," << (db ? 20 * std::log10(mag) : mag) << "," << ph << "\n";
  }
  return o.str();
}

}  // namespace

TEST_CASE("measured CSV: Hz and dB converted, wrapped phase unwrapped (1/(s+1)^3, analytic)", "[model][measured]") {
  const MeasuredResponse r = read("# swept sine, bench 2\nfrequency_hz,magnitude_db,phase_deg\n" + third_order_rows(true, true));
  REQUIRE(r.size() == 30);
  for (size_t i = 0; i < r.size(); ++i) {
    const double w = r.w_rad_s[i];
    CHECK(w == Approx(std::pow(10.0, -1.0 + 3.0 * i / 29)).epsilon(1e-12));
    CHECK(std::exp(r.log_mag[i]) == Approx(std::pow(1 + w * w, -1.5)).epsilon(1e-12));
    CHECK(r.phase_rad[i] == Approx(-3 * std::atan(w)).margin(1e-12));  // below -180 deg at the top: unwrapped
  }
  CHECK(r.coherence.empty());
}

TEST_CASE("measured CSV: units from the spec's key, ratio magnitudes, coherence and extra columns", "[model][measured]") {
  MeasuredReadOptions opt;
  opt.frequency_unit = "rad/s";
  opt.magnitude_unit = "ratio";
  std::string rows;
  std::istringstream in(third_order_rows(false, false));
  for (std::string line; std::getline(in, line);) rows += "7," + line + ",0.9\n";
  const MeasuredResponse r = read("channel,Frequency,Magnitude,Phase_deg,Coherence\r\n" + rows, opt);
  REQUIRE(r.size() == 30);
  CHECK(r.w_min() == Approx(0.1));
  CHECK(r.w_max() == Approx(100.0));
  CHECK(std::abs(r.point(29)) == Approx(std::pow(1.0 + 1e4, -1.5)).epsilon(1e-12));
  REQUIRE(r.coherence.size() == 30);
  CHECK(r.coherence[3] == 0.9);
  // The header's unit in brackets is read as well.
  CHECK(read("frequency [rad/s],magnitude (dB),phase\n" + third_order_rows(false, true)).w_max() == Approx(100.0));
}

TEST_CASE("measured CSV: bad files name the line and the column", "[model][measured]") {
  const std::string head = "frequency_hz,magnitude_db,phase_deg\n";
  std::string rows = third_order_rows(true, true, 10);
  CHECK(error_of(head + rows + "0.5,-3,-20\n") .find("bench.csv: line 12, column frequency_hz: frequency does not increase") == 0);
  CHECK(error_of(head + "1,nan,-3\n" + rows).find("line 2, column magnitude_db: value is not finite") != std::string::npos);
  CHECK(error_of(head + "1,x,-3\n" + rows).find("line 2, column magnitude_db: \"x\" is not a number") != std::string::npos);
  CHECK(error_of(head + "1,-3\n" + rows).find("line 2: 2 cells where the header has 3") != std::string::npos);
  CHECK(error_of(head + "1,-3,0\n2,-4,-10\n").find("2 data rows, fewer than the 8 needed") != std::string::npos);
  CHECK(error_of("frequency,magnitude_db,phase_deg\n" + rows).find("column frequency: no unit in the header") != std::string::npos);
  CHECK(error_of("frequency_hz,phase_deg\n" + rows).find("no magnitude column") != std::string::npos);
  CHECK(error_of("").find("no header line") != std::string::npos);
  MeasuredReadOptions clash;
  clash.frequency_unit = "rad/s";
  CHECK(error_of(head + rows, clash).find("disagrees") != std::string::npos);
  clash.frequency_unit = "rpm";
  CHECK(error_of(head + rows, clash).find("\"rpm\" is not one of hz, rad/s") != std::string::npos);
  // A 170 deg step between rows cannot be unwrapped with confidence: the row and column are named.
  std::string jumpy;
  for (int i = 0; i < 10; ++i) jumpy += std::to_string(1 + i) + ",0," + (i == 6 ? "-175" : "-5") + "\n";
  CHECK(error_of(head + jumpy).find("line 8, column phase_deg: phase changes by 170 deg") != std::string::npos);
  CHECK(error_of("frequency_hz,magnitude_db,phase_deg,coherence\n" + std::string("1,0,0,1.2\n")).find("column coherence: coherence must lie within 0..1") !=
        std::string::npos);
  CHECK(error_of("frequency_hz,magnitude_ratio,phase_deg\n1,0,0\n").find("magnitude ratio must be positive") != std::string::npos);
}

TEST_CASE("unwrap_phase_deg: steps folded into -180 < step <= 180 deg, the first too-large step reported", "[model][measured]") {
  std::vector<double> p = {170, -170, -10, 160};  // true path 170, 190, 350, 520
  CHECK(unwrap_phase_deg(p, 155.0) == 2);  // 190 -> 350 is a 160 deg step
  CHECK(p[1] == 190.0);
  CHECK(p[2] == 350.0);
  CHECK(p[3] == 520.0);
  std::vector<double> q = {0, -100, -200, -300};
  CHECK(unwrap_phase_deg(q, 150.0) == -1);
  CHECK(q[3] == -300.0);
}

TEST_CASE("interpolation on log frequency is exact for 3/s (log |G| linear in log w, constant phase)", "[model][measured]") {
  std::string rows;
  for (int i = 0; i < 9; ++i) {
    const double w = std::pow(10.0, -1.0 + 0.5 * i);
    rows += std::to_string(w) + "," + std::to_string(3.0 / w) + ",-90\n";
  }
  const MeasuredResponse r = read("frequency_rad_s,magnitude_ratio,phase_deg\n" + rows);
  for (double w : {0.13, 0.7, 2.2, 45.0, 900.0}) {
    const Complex g = r.at(w), exact = 3.0 / Complex(0, w);
    CHECK(std::abs(g - exact) / std::abs(exact) < 1e-5);  // rows carry 6 digits
  }
  CHECK(r.at(1e-3) == r.point(0));  // held outside the range
  CHECK(r.at(1e6) == r.point(8));
}

TEST_CASE("measured_divide undoes measured_multiply and recovers G from loop data C G (analytic)", "[model][measured]") {
  const MeasuredResponse g = read("frequency_rad_s,magnitude_ratio,phase_deg\n" + third_order_rows(false, false));
  const Zpk c = make(4.0, {Complex(-0.5, 0)}, {Complex(0, 0), Complex(-20, 0)});  // PI with roll-off: phase starts at -90
  const MeasuredResponse loop = measured_multiply(g, c, 0.01);
  for (size_t i = 0; i < g.size(); ++i) {
    const double w = g.w_rad_s[i];
    const Complex exact = c.evaluate(Complex(0, w)) * std::polar(1.0, -0.01 * w) / std::pow(Complex(1, w), 3);
    CHECK(std::abs(loop.point(i) - exact) < 1e-12 * std::abs(exact));
  }
  // Unwrapped: the loop phase runs continuously below -180 deg (-90 - 3 atan w - ...).
  CHECK(loop.phase_rad.back() < -M_PI);
  const MeasuredResponse back = measured_divide(loop, c, 0.01);
  for (size_t i = 0; i < g.size(); ++i) {
    CHECK(back.log_mag[i] == Approx(g.log_mag[i]).margin(1e-12));
    CHECK(back.phase_rad[i] == Approx(g.phase_rad[i]).margin(1e-12));
  }
  CHECK_THROWS_AS(measured_divide(g, make(1.0, {Complex(0, g.w_rad_s[5])}, {}), 0.0), MeasuredDataError);  // a zero on the grid
}
