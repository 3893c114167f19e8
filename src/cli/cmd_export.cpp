#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <memory>
#include <vector>

#include "commands.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/jobs/export.hpp"
#include "polewright/outputs/export_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw::cli {

namespace {

double number_option(const std::string& option, const std::string& text, const char* expected) {
  errno = 0;
  char* end = nullptr;
  const double v = std::strtod(text.c_str(), &end);
  if (text.empty() || end == text.c_str() || *end != '\0' || errno == ERANGE || !std::isfinite(v))
    throw SpecError(option, "is \"" + text + "\": expected " + expected);
  return v;
}

int whole_option(const std::string& option, const std::string& text, int lo, int hi) {
  errno = 0;
  char* end = nullptr;
  const long v = std::strtol(text.c_str(), &end, 10);
  if (text.empty() || *end != '\0' || errno == ERANGE || v < lo || v > hi)
    throw SpecError(option, "is \"" + text + "\": expected a whole number within " + std::to_string(lo) + ".." +
                                std::to_string(hi));
  return static_cast<int>(v);
}

std::string strip_c_extension(const std::string& out) {
  for (const char* ext : {".c", ".h"}) {
    const std::string e = ext;
    if (out.size() > e.size() && out.compare(out.size() - e.size(), e.size(), e) == 0) return out.substr(0, out.size() - e.size());
  }
  return out;
}

// The library blames a bad export on an ExportOptions field (or "rank"); the command line names
// the option that sets it. Fields no option sets keep their names; JSON paths pass unchanged.
constexpr OptionNames kExportOptions = {
    {"sample_time_s", "--sample-time"},     {"prewarp_rad_s", "--prewarp-rad-s"},
    {"compute_delay_samples", "--compute-delay"},   {"clamp", "--clamp"},
    {"precision", "--precision"},           {"rank", "--rank"},
    {"max_phase_margin_drop_deg", "--max-pm-drop-deg"}, {"max_gain_margin_drop_db", "--max-gm-drop-db"},
    {"min_rate_ratio", "--min-rate-ratio"}};

}  // namespace

void register_export(CLI::App& app) {
  auto* cmd = app.add_subcommand("export", "Discretise a compensator, write C, JSON or CSV, and re-verify the sampled loop");
  struct Args {
    std::string result, spec, out, rank = "1", sample_time, method, prewarp, delay, format = "c", precision, pm_drop = "5", gm_drop = "2", rate = "10";
    std::vector<std::string> clamp;
  };
  auto a = std::make_shared<Args>();
  cmd->add_option("RESULT", a->result, "check/design result JSON, or a file holding one compensator object")->required();
  cmd->add_option("--rank", a->rank, "candidate rank in a design result (default 1)");
  cmd->add_option("--sample-time", a->sample_time, "sample time T in seconds (default: the spec's implementation block)");
  cmd->add_option("--method", a->method, "tustin, prewarp, zoh or matched (default: the spec's, else tustin)");
  cmd->add_option("--prewarp-rad-s", a->prewarp, "warp point for --method prewarp (default: the continuous crossover)");
  cmd->add_option("--compute-delay", a->delay, "samples between sampling y and applying u, a fraction allowed (default: the spec's, else 0)");
  cmd->add_option("--format", a->format, "c (default: OUT.h + OUT.c), json or csv");
  cmd->add_option("--precision", a->precision, "double or float: the C code and the coefficients re-verified (default: the spec's word length, else double)");
  cmd->add_option("--clamp", a->clamp, "LO HI: clamp the C output, with conditional integration")->expected(2);
  cmd->add_option("--spec", a->spec, "spec file to re-verify against (needed for a bare compensator; overrides an embedded spec)");
  cmd->add_option("--max-pm-drop-deg", a->pm_drop, "warn when the phase margin drops by more (default 5)");
  cmd->add_option("--max-gm-drop-db", a->gm_drop, "warn when the gain margin drops by more (default 2)");
  cmd->add_option("--min-rate-ratio", a->rate, "warn when 2 pi / T is under this times the crossover (default 10)");
  cmd->add_option("-o,--output", a->out, "output: the base name for c (OUT.h, OUT.c), the file for json/csv ('-' = stdout)")
      ->required();
  cmd->callback([a] {
    select([a] {
      std::string file = a->result;
      return guarded(file, [&] {
        // The spec's implementation block (of the result, or --spec) gives the defaults; the
        // options given here override it one by one.
        ResultInput in = parse_result(read_json_file(a->result));
        if (!a->spec.empty()) {
          file = a->spec;
          in.spec = parse_spec(read_spec_file(a->spec));
          file = a->result;
        }
        const bool from_spec = in.spec && in.spec->implementation;
        ExportOptions o = from_spec ? ExportOptions::FromImplementation(*in.spec->implementation) : ExportOptions{};
        if (!a->sample_time.empty()) {
          o.sample_time_s = number_option("--sample-time", a->sample_time, "a number of seconds > 0");
          if (!(o.sample_time_s > 0.0)) throw SpecError("--sample-time", "is \"" + a->sample_time + "\": must be > 0");
        } else if (!from_spec) {
          throw SpecError("--sample-time", "is needed: the spec has no implementation block to take the sample time from");
        }
        if (!a->method.empty()) {
          const auto m = parse_discrete_method(a->method);
          if (!m) throw SpecError("--method", "is \"" + a->method + "\": expected tustin, prewarp, zoh or matched");
          if (*m != o.method) o.prewarp_rad_s.reset();  // the spec's warp point belongs to its own method
          o.method = *m;
        }
        if (!a->prewarp.empty()) {
          if (o.method != DiscreteMethod::Prewarp) throw SpecError("--prewarp-rad-s", "applies to --method prewarp only");
          o.prewarp_rad_s = number_option("--prewarp-rad-s", a->prewarp, "a frequency in rad/s > 0");
        }
        if (!a->delay.empty()) {
          o.compute_delay_samples = number_option("--compute-delay", a->delay, "a number of samples within 0..50");
          if (!(o.compute_delay_samples >= 0.0 && o.compute_delay_samples <= kMaxComputeDelaySamples))
            throw SpecError("--compute-delay", "is \"" + a->delay + "\": must be within 0..50 samples");
        }
        if (a->format != "c" && a->format != "json" && a->format != "csv")
          throw SpecError("--format", "is \"" + a->format + "\": expected c, json or csv");
        if (!a->precision.empty()) {
          if (a->precision != "double" && a->precision != "float")
            throw SpecError("--precision", "is \"" + a->precision + "\": expected double or float");
          o.precision = a->precision == "float" ? Precision::Float : Precision::Double;
        }
        if (!a->clamp.empty()) {
          const double lo = number_option("--clamp", a->clamp.at(0), "two numbers LO HI");
          const double hi = number_option("--clamp", a->clamp.at(1), "two numbers LO HI");
          if (!(lo < hi)) throw SpecError("--clamp", "needs LO < HI");
          o.clamp = std::make_pair(lo, hi);
        }
        o.max_phase_margin_drop_deg = number_option("--max-pm-drop-deg", a->pm_drop, "a number of degrees >= 0");
        o.max_gain_margin_drop_db = number_option("--max-gm-drop-db", a->gm_drop, "a number of dB >= 0");
        o.min_rate_ratio = number_option("--min-rate-ratio", a->rate, "a number > 0");
        const int rank = whole_option("--rank", a->rank, 1, 1000000);
        if (a->format == "c" && a->out == "-") throw SpecError("-o", "must name a base for OUT.h and OUT.c with --format c");
        if (a->format == "c") {
          // The files are named as given (OUT.h, OUT.c); the source includes OUT.h by that name.
          const std::string base = strip_c_extension(a->out);
          const size_t slash = base.find_last_of('/');
          const std::string stem = slash == std::string::npos ? base : base.substr(slash + 1);
          const std::string why = stem.empty() || stem == ".c" || stem == ".h" ? c_header_file_error("") : c_header_file_error(stem + ".h");
          if (!why.empty()) throw SpecError("-o", "is \"" + a->out + "\": " + why);
        }

        const ExportReport r = naming_options(kExportOptions, [&] { return run_export(in, rank, o); });
        const bool to_stdout = a->out == "-";
        if (a->format == "c") {
          const std::string base = strip_c_extension(a->out);
          const std::string name = c_identifier(base);
          const size_t slash = base.find_last_of('/');
          const std::string stem = slash == std::string::npos ? base : base.substr(slash + 1);
          emit(base + ".h", export_c_header(r, name, stem + ".h"));
          emit(base + ".c", export_c_source(r, name, stem + ".h", stem + ".c"));
        } else if (a->format == "json") {
          emit(a->out, export_json(r).dump(1) + "\n");
        } else {
          emit(a->out, export_csv(r));
        }
        (to_stdout ? std::cerr : std::cout) << export_text(r);
        return r.all_met || !r.verified ? kExitMet : kExitNotMet;
      });
    });
  });
}

}  // namespace pw::cli
