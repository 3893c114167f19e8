#include <catch2/catch.hpp>

#include <set>
#include <string>

#include "polewright/requirements/metric.hpp"

using namespace pw;

TEST_CASE("metric table is indexed by id and keys are unique", "[requirements][metric]") {
  std::set<std::string> keys;
  for (int i = 0; i < kMetricCount; ++i) {
    const MetricInfo& m = metric_table()[static_cast<size_t>(i)];
    CHECK(static_cast<int>(m.id) == i);
    CHECK(&metric_info(m.id) == &m);
    keys.insert(m.key);
  }
  CHECK(keys.size() == static_cast<size_t>(kMetricCount));
  CHECK(std::string(metric_info(MetricId::Overshoot).key) == "overshoot_pct");
  CHECK(metric_info(MetricId::SettlingTime).time_domain);
  CHECK_FALSE(metric_info(MetricId::PhaseMargin).time_domain);
}

TEST_CASE("disturbance and noise metrics are computed and shown on request only", "[requirements][metric][disturbance]") {
  for (MetricId id : {MetricId::LoadPeak, MetricId::LoadRecovery, MetricId::LoadIae, MetricId::OutputPeak,
                      MetricId::OutputRecovery, MetricId::OutputIae}) {
    CHECK(metric_info(id).on_request);
    CHECK(metric_info(id).time_domain);  // screened like the reference step
  }
  CHECK_FALSE(metric_info(MetricId::NoiseEffortPeak).time_domain);
  CHECK(metric_info(MetricId::ControllerHighFrequencyGain).on_request);
  CHECK_FALSE(metric_info(MetricId::Overshoot).on_request);
  CHECK(metric_shown(metric_info(MetricId::Overshoot), false));
  CHECK_FALSE(metric_shown(metric_info(MetricId::LoadPeak), false));
  CHECK(metric_shown(metric_info(MetricId::LoadPeak), true));
}
