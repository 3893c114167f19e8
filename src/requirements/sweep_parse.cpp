#include "polewright/requirements/sweep_parse.hpp"

#include <gsl/gsl_qrng.h>
#include <muParser.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <mutex>
#include <set>
#include <stdexcept>

#include "json_reader.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw {

bool sweep_word_key(const std::string& key) {
  static const char* const words[] = {"name",   "$schema",        "input",          "integrator", "objective",
                                      "method", "word_length", "file", "frequency_unit", "magnitude_unit", "anti_windup"};
  for (const char* w : words)
    if (key == w) return true;
  return false;
}

using detail::index_path;
using detail::json;
using detail::key_path;
using detail::member;
using detail::read_integer;
using detail::read_number;

namespace {

constexpr int kMaxSobolDimensions = 40;  // GSL's Sobol generator


std::string pointer_to_path(const std::string& prefix, const json::json_pointer& p) {
  // json_pointer's string form is "/plant/denominator/0": rebuild "$.base.plant.denominator[0]".
  std::string out = prefix, token;
  const std::string s = p.to_string();
  size_t i = 1;
  while (i <= s.size()) {
    const size_t j = std::min(s.find('/', i), s.size());
    token = s.substr(i, j - i);
    const bool index = !token.empty() && std::all_of(token.begin(), token.end(), ::isdigit);
    out += index ? "[" + token + "]" : "." + token;
    i = j + 1;
  }
  return out;
}

void find_expressions(const json& j, const json::json_pointer& here, const std::string& key, std::vector<ExpressionSite>& out) {
  if (j.is_string() && !sweep_word_key(key)) {
    out.push_back({here, pointer_to_path("$.base", here), j.get<std::string>()});
  } else if (j.is_object()) {
    for (auto it = j.begin(); it != j.end(); ++it) find_expressions(it.value(), here / it.key(), it.key(), out);
  } else if (j.is_array()) {
    for (size_t i = 0; i < j.size(); ++i) find_expressions(j[i], here / i, key, out);
  }
}

bool valid_name(const std::string& n) {
  if (n.empty() || n.size() > 64 || !(std::isalpha(static_cast<unsigned char>(n[0])) || n[0] == '_')) return false;
  return std::all_of(n.begin(), n.end(), [](char c) { return std::isalnum(static_cast<unsigned char>(c)) || c == '_'; });
}

std::string names_of(const std::vector<SweepParameter>& ps) {
  std::string s;
  for (const SweepParameter& p : ps) s += (s.empty() ? "" : ", ") + p.name;
  return s;
}

// Names the expression parser defines itself: a parameter of that name would be shadowed or
// clash (the error would then be blamed on an expression).
bool reserved_name(const std::string& n) {
  static const std::set<std::string> kReserved = {
      "_pi", "_e", "sin", "cos", "tan", "asin", "acos", "atan", "sinh", "cosh", "tanh", "asinh", "acosh",
      "atanh", "log2", "log10", "log", "ln", "exp", "sqrt", "sign", "rint", "abs", "min", "max", "sum", "avg"};
  return kReserved.count(n) > 0;
}

// A pure expression: no assignment ("k=7", "k+=1") and one value (no "k,3" list). Returns why not.
std::string impurity(const std::string& text) {
  for (size_t i = 0; i < text.size(); ++i) {
    if (text[i] == ',') {
      // A comma is fine inside a function call's parentheses: min(a,b).
      int depth = 0;
      for (size_t j = 0; j < i; ++j) depth += text[j] == '(' ? 1 : text[j] == ')' ? -1 : 0;
      if (depth <= 0) return "is a list of values (\",\" outside a function call); give one expression";
    }
    if (text[i] != '=') continue;
    if (i + 1 < text.size() && text[i + 1] == '=') {  // "==": a comparison
      ++i;
      continue;
    }
    if (i > 0 && (text[i - 1] == '!' || text[i - 1] == '<' || text[i - 1] == '>')) continue;
    return "assigns a value (\"=\"); a sweep expression computes a value from the parameters and changes none";
  }
  return "";
}

// A number written in the expression that is beyond double range ("1e400"): the expression parser
// would read its tail as a name.
std::string out_of_range_number(const std::string& text) {
  for (size_t i = 0; i < text.size(); ++i) {
    const bool starts = std::isdigit(static_cast<unsigned char>(text[i])) &&
                        (i == 0 || !(std::isalnum(static_cast<unsigned char>(text[i - 1])) || text[i - 1] == '_' || text[i - 1] == '.'));
    if (!starts) continue;
    char* end = nullptr;
    errno = 0;
    const double v = std::strtod(text.c_str() + i, &end);
    const size_t len = static_cast<size_t>(end - (text.c_str() + i));
    if (errno == ERANGE && std::isinf(v)) return text.substr(i, len);
    i += len > 0 ? len - 1 : 0;
  }
  return "";
}

// Evaluates one expression with the parameters bound to `values`. Throws SpecError at site.path.
double evaluate(const ExpressionSite& site, const std::vector<SweepParameter>& ps, const std::vector<double>& values) {
  std::vector<double> vars(values);
  mu::Parser parser;
  try {
    const std::string why = impurity(site.text);
    if (!why.empty()) throw SpecError(site.path, "expression \"" + site.text + "\" " + why);
    const std::string huge = out_of_range_number(site.text);
    if (!huge.empty())
      throw SpecError(site.path, "expression \"" + site.text + "\": the number " + huge + " is beyond double range");
    parser.SetExpr(site.text);
    for (const auto& used : parser.GetUsedVar()) {
      const bool known = std::any_of(ps.begin(), ps.end(), [&](const SweepParameter& p) { return p.name == used.first; });
      if (!known)
        throw SpecError(site.path, "expression \"" + site.text + "\" uses the unknown name \"" + used.first +
                                       "\" (parameters: " + names_of(ps) + ")");
    }
    for (size_t i = 0; i < ps.size(); ++i) parser.DefineVar(ps[i].name, &vars[i]);
    const double v = parser.Eval();
    if (!std::isfinite(v)) throw SpecError(site.path, "expression \"" + site.text + "\" is not finite at this point");
    return v;
  } catch (const mu::Parser::exception_type& e) {
    throw SpecError(site.path, "expression \"" + site.text + "\": " + e.GetMsg());
  }
}

SweepParameter parse_parameter(const json& j, const std::string& name, const std::string& path) {
  if (!valid_name(name)) throw SpecError(path, "is not a usable parameter name (letters, digits and _, not starting with a digit)");
  if (reserved_name(name))
    throw SpecError(path, "is a name the expression language defines itself (a constant or function); choose another");
  SweepParameter p;
  p.name = name;
  if (member(j, "values")) {
    detail::expect_object(j, path, {"values"});
    const json& v = j["values"];
    if (!v.is_array() || v.empty()) throw SpecError(key_path(path, "values"), "must be a non-empty array of numbers");
    if (v.size() > 100000) throw SpecError(key_path(path, "values"), "has more than 100000 values");
    for (size_t i = 0; i < v.size(); ++i) p.values.push_back(read_number(v[i], index_path(key_path(path, "values"), i)));
    return p;
  }
  detail::expect_object(j, path, {"from", "to", "count", "scale"});
  for (const char* k : {"from", "to"})
    if (!member(j, k)) throw SpecError(key_path(path, k), "is missing: a parameter is a list of values or a range from, to, count");
  p.from = read_number(j["from"], key_path(path, "from"));
  p.to = read_number(j["to"], key_path(path, "to"));
  if (!(p.from < p.to)) throw SpecError(key_path(path, "to"), "must be greater than from (an empty or inverted range)");
  if (const json* s = member(j, "scale")) {
    if (!s->is_string() || (*s != "linear" && *s != "log"))
      throw SpecError(key_path(path, "scale"), "must be \"linear\" or \"log\"");
    p.log = *s == "log";
  }
  if (p.log && !(p.from > 0.0)) throw SpecError(key_path(path, "from"), "must be > 0 on a log scale");
  p.count = member(j, "count") ? static_cast<int>(read_integer(j["count"], key_path(path, "count"), 2, 1000000)) : 0;
  return p;
}

unsigned long long splitmix64(unsigned long long& state) {
  unsigned long long z = (state += 0x9E3779B97F4A7C15ULL);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

double unit_from(unsigned long long& state) { return static_cast<double>(splitmix64(state) >> 11) * 0x1.0p-53; }

}  // namespace

const char* sweep_job_name(SweepJob j) {
  switch (j) {
    case SweepJob::Design: return "design";
    case SweepJob::Check: return "check";
    case SweepJob::Retune: return "retune";
  }
  return "design";
}

double SweepParameter::at_unit(double u) const {
  u = std::clamp(u, 0.0, 1.0);
  if (!is_range()) return values[std::min(values.size() - 1, static_cast<size_t>(u * static_cast<double>(values.size())))];
  return log ? from * std::pow(to / from, u) : from + u * (to - from);
}

double SweepParameter::at_grid(int k) const {
  if (!is_range()) return values[static_cast<size_t>(k)];
  if (k == count - 1) return to;  // exact end points
  return at_unit(static_cast<double>(k) / (count - 1));
}

long long SweepFile::point_count() const {
  if (sample != SweepSample::Grid) return sample_count;
  long long n = 1;
  for (const SweepParameter& p : parameters) n *= p.grid_count();
  return n;
}

unsigned long long point_seed(unsigned long long sweep_seed, long long index) {
  unsigned long long s = sweep_seed * 0xD1B54A32D192ED03ULL + static_cast<unsigned long long>(index);
  return splitmix64(s) >> 11;
}

SweepFile parse_sweep(const json& doc) {
  const std::vector<std::string> top = {"$schema", "name", "base", "parameters", "sample", "job", "seed", "point_limit"};
  if (doc.is_object())  // a spec key written beside base instead of inside it
    for (auto it = doc.begin(); it != doc.end(); ++it) {
      const std::vector<std::string>& spec_keys = known_keys("spec");
      if (std::find(top.begin(), top.end(), it.key()) == top.end() &&
          std::find(spec_keys.begin(), spec_keys.end(), it.key()) != spec_keys.end())
        throw SpecError(key_path("$", it.key()), "unknown key here (a spec key: it belongs in $.base)");
    }
  detail::expect_object(doc, "$", top);
  SweepFile f;
  f.document = doc;
  const json* base = member(doc, "base");
  if (!base) throw SpecError("$.base", "is missing: a sweep needs a base spec");
  if (!base->is_object()) throw SpecError("$.base", "must be a spec object");
  f.base = *base;
  const json* params = member(doc, "parameters");
  if (!params) throw SpecError("$.parameters", "is missing: a sweep needs at least one parameter");
  if (!params->is_object() || params->empty()) throw SpecError("$.parameters", "must be an object with at least one parameter");
  for (auto it = params->begin(); it != params->end(); ++it)
    f.parameters.push_back(parse_parameter(it.value(), it.key(), key_path("$.parameters", it.key())));
  if (const json* s = member(doc, "sample")) {
    detail::expect_object(*s, "$.sample", {"method", "count"});
    const json* m = member(*s, "method");
    if (!m || !m->is_string() || (*m != "grid" && *m != "sobol" && *m != "latin"))
      throw SpecError("$.sample.method", "must be \"grid\", \"sobol\" or \"latin\"");
    f.sample = *m == "grid" ? SweepSample::Grid : (*m == "sobol" ? SweepSample::Sobol : SweepSample::Latin);
    if (f.sample == SweepSample::Grid && member(*s, "count"))
      throw SpecError("$.sample.count", "is for sobol and latin samples; the grid takes every combination");
    if (f.sample != SweepSample::Grid) {
      if (!member(*s, "count")) throw SpecError("$.sample.count", "is missing: sobol and latin samples need a count");
      f.sample_count = read_integer((*s)["count"], "$.sample.count", 1, kMaxSampledPoints);
    }
    if (f.sample == SweepSample::Sobol && f.parameters.size() > static_cast<size_t>(kMaxSobolDimensions))
      throw SpecError("$.parameters", "has more than 40 parameters: too many for a Sobol sample");
  }
  for (const SweepParameter& p : f.parameters)
    if (p.is_range() && p.count == 0 && f.sample == SweepSample::Grid)
      throw SpecError(key_path(key_path("$.parameters", p.name), "count"), "is missing: a range on the grid needs a count");
  if (f.sample == SweepSample::Grid) {
    double n = 1.0;
    for (const SweepParameter& p : f.parameters) n *= p.grid_count();
    if (n > static_cast<double>(kMaxSweepPoints)) throw SpecError("$.parameters", "make more than 10000000 grid points");
  }
  if (const json* j = member(doc, "job")) {
    if (!j->is_string() || (*j != "design" && *j != "check" && *j != "retune"))
      throw SpecError("$.job", "must be \"design\", \"check\" or \"retune\"");
    f.job = *j == "design" ? SweepJob::Design : (*j == "check" ? SweepJob::Check : SweepJob::Retune);
  }
  if (const json* s = member(doc, "seed")) f.seed = static_cast<unsigned long long>(read_integer(*s, "$.seed", 0, 9007199254740991LL));
  if (const json* l = member(doc, "point_limit")) {
    detail::expect_object(*l, "$.point_limit", {"evaluations", "seconds"});
    if (const json* e = member(*l, "evaluations")) f.point_evaluations = read_integer(*e, "$.point_limit.evaluations", 1, 1000000000LL);
    if (const json* t = member(*l, "seconds")) {
      f.point_seconds = read_number(*t, "$.point_limit.seconds");
      if (!(f.point_seconds > 0.0)) throw SpecError("$.point_limit.seconds", "must be > 0");
    }
  }
  find_expressions(f.base, json::json_pointer(), "", f.expressions);
  // A parameter no expression uses multiplies the points without changing them: warn.
  std::set<std::string> used;
  for (const ExpressionSite& site : f.expressions) {
    try {
      mu::Parser parser;
      parser.SetExpr(site.text);
      for (const auto& v : parser.GetUsedVar()) used.insert(v.first);
    } catch (const mu::Parser::exception_type&) {
      // reported with its path by the evaluation at the first point below
    }
  }
  for (const SweepParameter& p : f.parameters)
    if (!used.count(p.name))
      f.warnings.push_back(key_path("$.parameters", p.name) + ": no expression of the base uses it; its " +
                           std::to_string(p.grid_count()) + " value(s) repeat the same points");
  // Every expression, and the base spec itself, checked at the first point before any point runs.
  SweepPoints points(f);
  const std::vector<double> first = points.at(0);
  const json spec0 = point_spec(f, first, point_seed(f.seed, 0));
  try {
    parse_spec(spec0);
  } catch (const SpecError& e) {
    throw detail::rerooted(e, "$.base", " (at the first point)");
  }
  if (f.job != SweepJob::Design && !f.base.contains("current"))
    throw SpecError("$.base.current", std::string("is missing: the ") + sweep_job_name(f.job) + " job needs a current compensator");
  return f;
}

struct SweepPoints::Cursor {
  std::mutex mutex;
  gsl_qrng* q = nullptr;
  long long position = 0;  // index of the next point the generator gives
  std::vector<double> x;
  ~Cursor() {
    if (q) gsl_qrng_free(q);
  }
};

namespace {
constexpr unsigned long long kLatinSalt = 0x5EED5EED5EEDULL;
constexpr unsigned long long kGolden = 0x9E3779B97F4A7C15ULL;
// The k-th (0-based) draw of unit_from from `state0`, without drawing the ones before it.
double unit_draw(unsigned long long state0, unsigned long long k) {
  unsigned long long s = state0 + k * kGolden;
  return static_cast<double>(splitmix64(s) >> 11) * 0x1.0p-53;
}
}  // namespace

SweepPoints::SweepPoints(const SweepFile& f) : file_(&f), count_(f.point_count()) {
  const size_t dim = f.parameters.size();
  if (f.sample == SweepSample::Grid) return;
  unsigned long long state = f.seed ^ kLatinSalt;
  if (f.sample == SweepSample::Sobol) {
    shift_.resize(dim);
    for (double& s : shift_) s = unit_from(state);  // Cranley-Patterson rotation by the seed
    cursor_ = std::make_unique<Cursor>();
    cursor_->q = gsl_qrng_alloc(gsl_qrng_sobol, static_cast<unsigned>(dim));
    cursor_->x.resize(dim);
    return;
  }
  // Latin hypercube: in every dimension each of the count strata holds exactly one point. Only the
  // strata are kept (4 bytes per point and dimension); the jitter inside a stratum is recomputed
  // from the draw's number.
  strata_.assign(dim, {});
  for (size_t d = 0; d < dim; ++d) {
    std::vector<uint32_t>& perm = strata_[d];
    perm.resize(static_cast<size_t>(count_));
    for (long long i = 0; i < count_; ++i) perm[static_cast<size_t>(i)] = static_cast<uint32_t>(i);
    for (long long i = count_ - 1; i > 0; --i)
      std::swap(perm[static_cast<size_t>(i)], perm[splitmix64(state) % static_cast<unsigned long long>(i + 1)]);
    state += static_cast<unsigned long long>(count_) * kGolden;  // the jitter draws of this dimension
  }
}

SweepPoints::~SweepPoints() = default;

std::vector<double> SweepPoints::at(long long index) const {
  const SweepFile& f = *file_;
  std::vector<double> v(f.parameters.size());
  if (f.sample == SweepSample::Grid) {
    long long rest = index;
    for (size_t d = f.parameters.size(); d-- > 0;) {
      const int n = f.parameters[d].grid_count();
      v[d] = f.parameters[d].at_grid(static_cast<int>(rest % n));
      rest /= n;
    }
    return v;
  }
  if (index < 0 || index >= count_) throw std::out_of_range("sweep point index out of range");
  if (f.sample == SweepSample::Sobol) {
    std::lock_guard<std::mutex> lock(cursor_->mutex);
    if (index < cursor_->position) {
      gsl_qrng_init(cursor_->q);
      cursor_->position = 0;
    }
    for (; cursor_->position <= index; ++cursor_->position) gsl_qrng_get(cursor_->q, cursor_->x.data());
    for (size_t d = 0; d < v.size(); ++d) v[d] = f.parameters[d].at_unit(std::fmod(cursor_->x[d] + shift_[d], 1.0));
    return v;
  }
  // Draw numbers of dimension d: (count - 1) swaps, then one jitter per point in index order.
  const unsigned long long n = static_cast<unsigned long long>(count_);
  const unsigned long long state0 = f.seed ^ kLatinSalt;
  for (size_t d = 0; d < v.size(); ++d) {
    const unsigned long long draw = d * (2 * n - 1) + (n - 1) + static_cast<unsigned long long>(index);
    const double u = (static_cast<double>(strata_[d][static_cast<size_t>(index)]) + unit_draw(state0, draw)) / static_cast<double>(count_);
    v[d] = f.parameters[d].at_unit(u);
  }
  return v;
}

json point_spec(const SweepFile& f, const std::vector<double>& values, unsigned long long seed) {
  json spec = f.base;
  for (const ExpressionSite& site : f.expressions) spec[site.pointer] = evaluate(site, f.parameters, values);
  if (spec.contains("search") && !spec["search"].is_object()) throw SpecError("$.base.search", "must be an object");
  spec["search"]["seed"] = seed;
  spec["search"]["threads"] = 1;  // points run in parallel, each on one thread
  return spec;
}

}  // namespace pw
