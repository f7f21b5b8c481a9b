// A reloaded site gives the alarm stage new rules; alarms whose point and measure are still
// configured keep their state, removed ones go. Limits are the ISO 10816-3 group 2 rigid zone
// boundaries B/C 2.8 and C/D 4.5 mm/s (Annex A, as transcribed in REFERENCE_VALUES.md).
#include <gtest/gtest.h>

#include <vector>

#include "spinward/daemon/alarm_stage.h"

namespace spinward::daemon {
namespace {

class KeepingSubmitter final : public BatchSubmitter {
 public:
  bool Submit(storage::WriteBatch batch) override {
    batches.push_back(std::move(batch));
    return true;
  }
  std::vector<storage::WriteBatch> batches;
};

PointJudgement P101(double alert, double danger) {
  PointJudgement point;
  point.point_id = "P101-DE-H";
  AlarmRule rule;
  rule.point_id = "P101-DE-H";
  rule.measure = "velocity";
  rule.unit = "mm/s";
  rule.high_alert = alert;
  rule.high_danger = danger;
  rule.latching = true;
  point.rules.push_back(rule);
  return point;
}

storage::MeasurementRecord Velocity(std::int64_t end_ns, double mm_s) {
  storage::MeasurementRecord record;
  record.point_id = "P101-DE-H";
  record.interval_start_ns = end_ns - 1'000'000'000;
  record.interval_end_ns = end_ns;
  record.indicators.count = 25600;
  record.indicators.rms = 1.0;  // a live sensor: above any noise floor, not flat
  record.indicators.min = -1.4;
  record.indicators.max = 1.4;
  record.bands.push_back({"velocity", "mm/s", 10.0, 1000.0, mm_s});
  return record;
}

TEST(AlarmStageReload, KeptMeasureKeepsItsStateRemovedMeasureGoes) {
  KeepingSubmitter out;
  auto stage = AlarmStage::Create({P101(2.8, 4.5)}, {}, out);
  ASSERT_TRUE(stage.ok()) << stage.message();
  (*stage)->Consume(Velocity(1'000'000'000'000, 3.1));
  ASSERT_EQ(*(*stage)->State("P101-DE-H", "velocity"), AlarmState::kAlert);

  // New limits (e.g. after a baseline review): the latched alert stays, nothing is re-raised.
  const std::size_t batches_before = out.batches.size();
  ASSERT_TRUE((*stage)->Reconfigure({P101(3.5, 5.6)}).ok());
  EXPECT_EQ(*(*stage)->State("P101-DE-H", "velocity"), AlarmState::kAlert);
  EXPECT_EQ(out.batches.size(), batches_before);

  // An invalid rule (alert above danger) is refused and the running rules stay.
  EXPECT_FALSE((*stage)->Reconfigure({P101(6.0, 4.5)}).ok());
  EXPECT_EQ(*(*stage)->State("P101-DE-H", "velocity"), AlarmState::kAlert);

  // The point's alarm removed from the site: the stage no longer knows the measure.
  PointJudgement bare;
  bare.point_id = "P101-DE-H";
  ASSERT_TRUE((*stage)->Reconfigure({bare}).ok());
  EXPECT_FALSE((*stage)->State("P101-DE-H", "velocity").ok());
}

}  // namespace
}  // namespace spinward::daemon
