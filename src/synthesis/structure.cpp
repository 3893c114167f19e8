#include "polewright/synthesis/structure.hpp"

#include <algorithm>
#include <tuple>

namespace pw {

namespace {
constexpr StageFacts kStageTable[] = {
    {StageKind::Integrator, "integrator", 1, 1},
    {StageKind::Lead, "lead", 2, 1},
    {StageKind::Lag, "lag", 2, 1},
    {StageKind::Notch, "notch", 3, 2},
};
}  // namespace

const StageFacts& stage_facts(StageKind k) {
  for (const StageFacts& f : kStageTable)
    if (f.kind == k) return f;
  return kStageTable[0];
}

const char* stage_name(StageKind k) { return stage_facts(k).name; }

std::vector<StageKind> Structure::stages() const {
  std::vector<StageKind> out;
  if (integrator) out.push_back(StageKind::Integrator);
  for (int i = 0; i < lead; ++i) out.push_back(StageKind::Lead);
  for (int i = 0; i < lag; ++i) out.push_back(StageKind::Lag);
  for (int i = 0; i < notch; ++i) out.push_back(StageKind::Notch);
  return out;
}

std::vector<std::string> Structure::names() const {
  std::vector<std::string> out;
  for (StageKind k : stages()) out.push_back(stage_name(k));
  return out;
}

std::vector<Structure> enumerate_structures(const StageSettings& s) {
  std::vector<bool> integ;
  if (s.integrator == IntegratorChoice::Off || s.integrator == IntegratorChoice::Auto) integ.push_back(false);
  if (s.integrator == IntegratorChoice::On || s.integrator == IntegratorChoice::Auto) integ.push_back(true);
  std::vector<Structure> out;
  for (bool i : integ)
    for (int a = 0; a <= s.lead; ++a)
      for (int b = 0; b <= s.lag; ++b)
        for (int c = 0; c <= s.notch; ++c)
          if (!s.pid || (i && a == 1)) out.push_back(Structure{i, a, b, c});  // pid: integrator + one lead only
  std::stable_sort(out.begin(), out.end(), [](const Structure& x, const Structure& y) {
    return std::make_tuple(x.stage_count(), x.order(), x.integrator, -x.lead, -x.lag) <
           std::make_tuple(y.stage_count(), y.order(), y.integrator, -y.lead, -y.lag);
  });
  return out;
}

}  // namespace pw
