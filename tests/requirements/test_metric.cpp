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
