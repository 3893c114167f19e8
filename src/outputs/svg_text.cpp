#include "svg_text.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>

namespace pw {

std::string xml_escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: out += c;
    }
  }
  return out;
}

namespace {

// Removes trailing zeros after a decimal point, and the point itself ("2.50" -> "2.5", "3.0" -> "3").
std::string trim_zeros(std::string s) {
  const size_t e = s.find_first_of("eE");
  std::string mantissa = e == std::string::npos ? s : s.substr(0, e);
  const std::string exponent = e == std::string::npos ? "" : s.substr(e);
  if (mantissa.find('.') != std::string::npos) {
    while (!mantissa.empty() && mantissa.back() == '0') mantissa.pop_back();
    if (!mantissa.empty() && mantissa.back() == '.') mantissa.pop_back();
  }
  if (mantissa == "-0") mantissa = "0";
  return mantissa + exponent;
}

// "2.5e+04" -> "2.5e4", "1e-05" -> "1e-5".
std::string tidy_exponent(const std::string& s) {
  const size_t e = s.find('e');
  if (e == std::string::npos) return s;
  std::string mant = s.substr(0, e);
  std::string exp = s.substr(e + 1);
  bool negative = false;
  if (!exp.empty() && (exp[0] == '+' || exp[0] == '-')) {
    negative = exp[0] == '-';
    exp = exp.substr(1);
  }
  while (exp.size() > 1 && exp[0] == '0') exp = exp.substr(1);
  return mant + "e" + (negative ? "-" : "") + exp;
}

}  // namespace

std::string svg_coord(double v) {
  if (!std::isfinite(v)) return "0";
  char buf[48];
  std::snprintf(buf, sizeof buf, "%.2f", v);
  return trim_zeros(buf);
}

std::string format_tick(double v, double step) {
  if (!std::isfinite(v) || !std::isfinite(step) || step <= 0.0) return "";
  if (std::abs(v) < 1e-9 * step) return "0";
  const double a = std::abs(v);
  char buf[48];
  if (a >= 1e4 || a < 1e-3) {
    // Mantissa digits from the step relative to the value.
    const int digits = std::max(1, std::min(6, 1 + static_cast<int>(std::floor(std::log10(a) + 1e-9)) -
                                                   static_cast<int>(std::floor(std::log10(step) + 1e-9))));
    std::snprintf(buf, sizeof buf, "%.*e", digits - 1, v);
    return tidy_exponent(trim_zeros(buf));
  }
  int decimals = std::max(0, std::min(9, -static_cast<int>(std::floor(std::log10(step) + 1e-9))));
  // A step like 0.25 needs one decimal more than its leading digit says.
  while (decimals < 9) {
    const double scaled = step * std::pow(10.0, decimals);
    if (std::abs(scaled - std::round(scaled)) < 1e-6 * std::max(1.0, scaled)) break;
    ++decimals;
  }
  std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  return std::string(buf) == "-0" ? "0" : buf;
}

std::string format_decade(int exponent) {
  if (exponent >= -3 && exponent <= 3) {
    char buf[16];
    std::snprintf(buf, sizeof buf, "%.*f", exponent < 0 ? -exponent : 0, std::pow(10.0, exponent));
    return buf;
  }
  return "1e" + std::to_string(exponent);
}

std::string format_number(double v, int digits) {
  if (std::isinf(v)) return "unbounded";
  if (!std::isfinite(v)) return "n/a";
  if (v == 0.0) return "0";
  const double a = std::abs(v);
  char buf[48];
  if (a >= 1e5 || a < 1e-3) {
    std::snprintf(buf, sizeof buf, "%.*e", std::max(0, digits - 1), v);
    return tidy_exponent(trim_zeros(buf));
  }
  const int mag = static_cast<int>(std::floor(std::log10(a)));
  const int decimals = std::max(0, digits - 1 - mag);
  std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  return trim_zeros(buf);
}

}  // namespace pw
