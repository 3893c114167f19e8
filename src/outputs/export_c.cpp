#include <cctype>
#include <cmath>
#include <cstdio>
#include <stdexcept>

#include "polewright/outputs/export_output.hpp"
#include "polewright/outputs/json_values.hpp"

namespace pw {

std::string c_identifier(const std::string& path) {
  std::string base = path.substr(path.find_last_of('/') == std::string::npos ? 0 : path.find_last_of('/') + 1);
  const size_t dot = base.find('.');
  if (dot != std::string::npos && dot > 0) base = base.substr(0, dot);
  std::string id;
  for (char ch : base) {
    // ASCII letters and digits only (isalnum would follow the locale); every other byte, a UTF-8
    // one included, becomes one '_' per run.
    const bool keep = (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9') || ch == '_';
    if (keep) id += ch;
    else if (id.empty() || id.back() != '_') id += '_';
  }
  while (!id.empty() && id.back() == '_' && id.size() > 1 && id.find_first_not_of('_') != std::string::npos) id.pop_back();
  if (id.empty() || id.find_first_not_of('_') == std::string::npos) id = "compensator";
  // A leading digit is not an identifier; a leading underscore is reserved at file scope (C99 7.1.3).
  if (std::isdigit(static_cast<unsigned char>(id[0])) || id[0] == '_') id = "pw_" + id;
  return id;
}

std::string c_header_file_error(const std::string& file) {
  if (file.empty() || file == ".h") return "names no file (the base name before .h/.c is empty)";
  for (char ch : file) {
    if (ch == '"' || ch == '\\') return "has a quote or backslash, which a C #include \"...\" cannot name";
    if (static_cast<unsigned char>(ch) < 0x20 || ch == 0x7f) return "has a control character, which a C #include cannot name";
  }
  return "";
}

int integrator_sign(const Zpk& d) {
  Complex k(d.gain, 0.0);
  for (const Complex& z : d.zeros)
    if (std::abs(z - 1.0) > 1e-12) k *= 1.0 - z;
  for (const Complex& p : d.poles)
    if (std::abs(p - 1.0) > 1e-12) k /= 1.0 - p;
  return k.real() < 0.0 ? -1 : 1;
}

std::string c_literal(double v, Precision p) {
  if (!std::isfinite(v)) throw std::runtime_error("a coefficient is not finite");
  char buf[64];
  std::snprintf(buf, sizeof buf, p == Precision::Double ? "%.17g" : "%.9g", p == Precision::Double ? v : static_cast<double>(static_cast<float>(v)));
  std::string s = buf;
  if (s.find_first_of(".eE") == std::string::npos) s += ".0";
  if (p == Precision::Float) s += "f";
  return s;
}

namespace {

std::string upper(std::string s) {
  for (char& c : s) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
  return s;
}

std::string num(double v) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.9g", v);
  return buf;
}

// Text that is safe inside a C block comment: no "*/", no control characters.
std::string comment_text(const std::string& text) {
  std::string out;
  for (char ch : text) {
    if (static_cast<unsigned char>(ch) < 0x20 || ch == 0x7f) ch = ' ';
    if (ch == '/' && !out.empty() && out.back() == '*') out += ' ';
    out += ch;
  }
  return out;
}

// The comment block both files start with.
std::string banner(const ExportReport& r, const std::string& file) {
  std::string s = "/* " + comment_text(file) + ": discrete compensator exported by polewright.\n";
  s += " *\n * Design: " + comment_text(r.design_name) + " (rank " + std::to_string(r.rank) + " of a " + job_kind_name(r.source_job) + " file)\n";
  s += " * Continuous: C(s) = " + zpk_to_string(r.continuous) + "\n";
  if (const std::string pid = pid_form_text(r.continuous); !pid.empty())
    s += " * As PID (continuous, before discretisation): " + comment_text(pid) + "\n";
  s += " * Method: " + std::string(discrete_method_name(r.options.method));
  if (r.warp_rad_s) s += " (warped at " + num(*r.warp_rad_s) + " rad/s; notches at their own centres)";
  s += "\n * Sample time: " + num(r.options.sample_time_s) + " s (" + num(1.0 / r.options.sample_time_s) + " Hz)\n";
  s += " * Computation delay assumed in the re-verification: " + num(r.options.compute_delay_samples) + " sample(s)\n";
  s += " * Realisation: u = g * prod_i B_i(z^-1) / A_i(z^-1), " + std::to_string(r.cascade.sections.size()) +
       " second-order section(s), direct form II transposed, " +
       (r.options.precision == Precision::Double ? "double" : "float") + " precision.\n";
  if (r.options.clamp)
    s += " * Output clamp [" + num(r.options.clamp->first) + ", " + num(r.options.clamp->second) +
         "] with conditional integration: while the output is clamped and the error drives it further\n"
         " * into the limit, the integrator sections keep their state.\n";
  s += " * Re-verified: " + std::string(r.verified ? (r.all_met ? "the sampled loop meets the requirements" : "the sampled loop does NOT meet the requirements") : "no (no spec)") + "\n";
  if (r.verified && !r.not_judged.empty())
    s += " * Not judged on the sampled loop (no sampled evaluation yet): " + std::to_string(r.not_judged.size()) +
         " requirement(s), judged on the continuous loop only\n";
  s += " *\n * Cautions: " + std::string(kCautions) + "\n */\n";
  return s;
}

}  // namespace

std::string export_c_header(const ExportReport& r, const std::string& name, const std::string& file) {
  const std::string N = upper(name), real = name + "_real";
  std::string s = banner(r, file.empty() ? name + ".h" : file);
  s += "#ifndef " + N + "_H\n#define " + N + "_H\n\n#ifdef __cplusplus\nextern \"C\" {\n#endif\n\n";
  s += "#define " + N + "_SECTIONS " + std::to_string(r.cascade.sections.size()) + "\n";
  s += "#define " + N + "_SAMPLE_TIME_S " + c_literal(r.options.sample_time_s, Precision::Double) + "\n\n";
  s += "typedef " + std::string(r.options.precision == Precision::Double ? "double" : "float") + " " + real + ";\n\n";
  s += "/* Two delay states per section (direct form II transposed). */\n";
  s += "typedef struct {\n  " + real + " s[" + N + "_SECTIONS + 1][2];\n} " + name + "_state;\n\n";
  s += "/* Before first use: clears the state. */\nvoid " + name + "_init(" + name + "_state* st);\n";
  s += "/* After a fault, a mode change or a long pause: clears the state (the output restarts from the error alone). */\n";
  s += "void " + name + "_reset(" + name + "_state* st);\n";
  s += "/* Once per sample period: e = reference - measurement, returns the control output u. */\n";
  s += real + " " + name + "_step(" + name + "_state* st, " + real + " e);\n\n";
  s += "#ifdef __cplusplus\n}\n#endif\n\n#endif /* " + N + "_H */\n";
  return s;
}

std::string export_c_source(const ExportReport& r, const std::string& name, const std::string& header_file,
                            const std::string& file) {
  const Precision p = r.options.precision;
  const std::string N = upper(name), real = name + "_real";
  const size_t n = r.cascade.sections.size();
  const std::string header = header_file.empty() ? name + ".h" : header_file;
  if (!c_header_file_error(header).empty()) throw std::invalid_argument("C header file name \"" + header + "\" " + c_header_file_error(header));
  std::string s = banner(r, file.empty() ? name + ".c" : file);
  s += "#include \"" + header + "\"\n\n";
  // One spare row keeps the arrays non-empty for a pure gain.
  s += "/* b0, b1, b2 of each section; the comment gives its peak gain max |B/A| on the unit circle and the\n"
       " * running peak from e to its output (before kGain), for fixed-point scaling. */\n"
       "static const " + real + " kB[" + N + "_SECTIONS + 1][3] = {\n";
  for (const Biquad& q : r.cascade.sections) {
    auto pk = [](double v) { return std::isfinite(v) ? num(v) : std::string("unbounded"); };
    s += "  {" + c_literal(q.b[0], p) + ", " + c_literal(q.b[1], p) + ", " + c_literal(q.b[2], p) + "}, /* peak " + pk(q.peak_gain) +
         " at " + num(q.peak_at / r.options.sample_time_s) + " rad/s, running peak " + pk(q.running_peak) + " */\n";
  }
  s += "  {" + c_literal(0.0, p) + ", " + c_literal(0.0, p) + ", " + c_literal(0.0, p) + "}\n};\n";
  s += "/* a1, a2 of each section (a0 = 1). */\nstatic const " + real + " kA[" + N + "_SECTIONS + 1][2] = {\n";
  for (const Biquad& q : r.cascade.sections) s += "  {" + c_literal(q.a[1], p) + ", " + c_literal(q.a[2], p) + "},\n";
  s += "  {" + c_literal(0.0, p) + ", " + c_literal(0.0, p) + "}\n};\n";
  s += "/* 1 for a section whose pole is at z = 1 (an integrator). */\nstatic const int kIntegrator[" + N + "_SECTIONS + 1] = {";
  for (const Biquad& q : r.cascade.sections) s += std::string(q.integrator ? "1" : "0") + ", ";
  s += "0};\n";
  s += "static const " + real + " kGain = " + c_literal(r.cascade.gain, p) + ";\n";
  if (r.options.clamp) {
    s += "static const " + real + " kLo = " + c_literal(r.options.clamp->first, p) + ";\n";
    s += "static const " + real + " kHi = " + c_literal(r.options.clamp->second, p) + ";\n";
    s += "/* Sign of the integrators' low-frequency gain: a positive error drives them this way. */\n";
    s += "static const " + real + " kIntegratorSign = " + c_literal(integrator_sign(r.discrete), p) + ";\n";
  }
  s += "\nvoid " + name + "_reset(" + name + "_state* st) {\n  int i;\n";
  s += "  for (i = 0; i < " + N + "_SECTIONS + 1; ++i) {\n    st->s[i][0] = " + c_literal(0.0, p) + ";\n    st->s[i][1] = " +
       c_literal(0.0, p) + ";\n  }\n}\n\n";
  s += "void " + name + "_init(" + name + "_state* st) { " + name + "_reset(st); }\n\n";
  s += real + " " + name + "_step(" + name + "_state* st, " + real + " e) {\n";
  s += "  " + real + " next[" + N + "_SECTIONS + 1][2];\n  " + real + " x = e;\n  " + real + " u;\n  int i;\n";
  s += "  for (i = 0; i < " + N + "_SECTIONS; ++i) {\n";
  s += "    const " + real + " y = kB[i][0] * x + st->s[i][0];\n";
  s += "    next[i][0] = kB[i][1] * x - kA[i][0] * y + st->s[i][1];\n";
  s += "    next[i][1] = kB[i][2] * x - kA[i][1] * y;\n    x = y;\n  }\n";
  s += "  u = kGain * x;\n";
  if (r.options.clamp) {
    s += "  {\n    const int high = u > kHi, low = u < kLo;\n";
    s += "    /* Conditional integration: hold the integrators while the clamp is active and the error\n"
         "       pushes further into it. */\n";
    const std::string zero = c_literal(0.0, p);
    s += "    const int hold = (high && kIntegratorSign * e > " + zero + ") || (low && kIntegratorSign * e < " + zero + ");\n";
    s += "    for (i = 0; i < " + N + "_SECTIONS; ++i) {\n      if (hold && kIntegrator[i]) continue;\n";
    s += "      st->s[i][0] = next[i][0];\n      st->s[i][1] = next[i][1];\n    }\n";
    s += "    if (high) u = kHi;\n    if (low) u = kLo;\n  }\n";
  } else {
    s += "  for (i = 0; i < " + N + "_SECTIONS; ++i) {\n      st->s[i][0] = next[i][0];\n      st->s[i][1] = next[i][1];\n  }\n";
    s += "  (void)kIntegrator;\n";
  }
  s += "  return u;\n}\n";
  (void)n;
  return s;
}

}  // namespace pw
