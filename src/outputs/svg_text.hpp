// Text and number formatting for the SVG and HTML outputs: XML escaping, coordinates, tick labels
// and readable engineering numbers. Nothing here ever prints "nan" or "inf".
#pragma once

#include <string>

namespace pw {

// Escapes & < > " ' for XML text and attribute values.
std::string xml_escape(const std::string& text);

// A pixel coordinate with two decimals ("12.5", "-3"); non-finite values print as "0" (callers
// clip first, so this is a last guard, never a path to the output).
std::string svg_coord(double v);

// A tick label for `v` on an axis whose ticks are `step` apart: enough decimals to tell
// neighbouring ticks apart, the same count for every tick of the axis. Magnitudes of 1e4 and
// more, or below 1e-3 (other than 0), use the 1e4 style ("2.5e4", "1e-5").
std::string format_tick(double v, double step);

// A decade tick of a logarithmic axis: 10^e as "0.01", "1", "1000" for -3 <= e <= 3, else "1e4".
std::string format_decade(int exponent);

// A readable number with `digits` significant digits (no trailing zeros): "0.153", "12", "4.5e5";
// non-finite values give "n/a" ("unbounded" for +-infinity).
std::string format_number(double v, int digits = 3);

}  // namespace pw
