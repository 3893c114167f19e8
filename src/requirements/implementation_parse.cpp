#include "polewright/requirements/implementation.hpp"

#include <cmath>
#include <cstdio>

#include "json_reader.hpp"

namespace pw {

using detail::describe;
using detail::json;
using detail::key_path;
using detail::member;
using detail::read_number;

const char* word_length_name(WordLength w) { return w == WordLength::Float ? "float" : "double"; }

const std::vector<std::string>& implementation_keys() {
  static const std::vector<std::string> keys = {"sample_time_s", "method", "prewarp_rad_s", "compute_delay_samples",
                                                "word_length"};
  return keys;
}

Implementation parse_implementation(const json& j, const std::string& path) {
  detail::expect_object(j, path, implementation_keys());
  Implementation im;
  const json* t = member(j, "sample_time_s");
  const std::string tp = key_path(path, "sample_time_s");
  if (!t) throw SpecError(tp, "is missing: an implementation needs its sample time");
  im.sample_time_s = read_number(*t, tp, 1e6);
  if (!(im.sample_time_s > 0.0)) throw SpecError(tp, "must be > 0 (got " + describe(*t) + ")");
  if (const json* m = member(j, "method")) {
    const std::string mp = key_path(path, "method");
    const std::optional<DiscreteMethod> dm = m->is_string() ? parse_discrete_method(m->get<std::string>()) : std::nullopt;
    if (!dm) throw SpecError(mp, "must be \"tustin\", \"prewarp\", \"zoh\" or \"matched\" (got " + describe(*m) + ")");
    im.method = *dm;
  }
  if (const json* w = member(j, "prewarp_rad_s")) {
    const std::string wp = key_path(path, "prewarp_rad_s");
    if (im.method != DiscreteMethod::Prewarp)
      throw SpecError(wp, "applies to the prewarp method only (method is \"" + std::string(discrete_method_name(im.method)) + "\")");
    const double w0 = read_number(*w, wp, 1e12);
    if (!(w0 > 0.0)) throw SpecError(wp, "must be > 0 (got " + describe(*w) + ")");
    if (!(w0 * im.sample_time_s < M_PI)) {
      char buf[160];
      std::snprintf(buf, sizeof buf, "must be below the Nyquist frequency pi / T = %.6g rad/s (got %.6g)",
                    M_PI / im.sample_time_s, w0);
      throw SpecError(wp, buf);
    }
    im.prewarp_rad_s = w0;
  }
  if (const json* d = member(j, "compute_delay_samples")) {
    const std::string dp = key_path(path, "compute_delay_samples");
    im.compute_delay_samples = read_number(*d, dp, 1e9);
    if (!(im.compute_delay_samples >= 0.0 && im.compute_delay_samples <= kMaxComputeDelaySamples))
      throw SpecError(dp, "must be >= 0 and <= 50 samples (got " + describe(*d) + ")");
  }
  if (const json* w = member(j, "word_length")) {
    const std::string wp = key_path(path, "word_length");
    const std::string s = w->is_string() ? w->get<std::string>() : "";
    if (s == "double") im.word_length = WordLength::Double;
    else if (s == "float") im.word_length = WordLength::Float;
    else throw SpecError(wp, "must be \"double\" or \"float\" (got " + describe(*w) + ")");
  }
  return im;
}

}  // namespace pw
