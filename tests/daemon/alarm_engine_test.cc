// The alarm engine facade: rules per point and measure, sensor faults kept apart from machine
// alarms, interval order, and restore from snapshots (a restart neither raises again nor forgets).
// Limits: ISO 10816-3:2009 Annex A as transcribed in REFERENCE_VALUES.md, group 2 rigid
// (B/C 2.8, C/D 4.5 mm/s) for P-102 and group 1 rigid (4.5, 7.1) for P-101.
#include "spinward/daemon/alarm_engine.h"

#include <gtest/gtest.h>

#include <cmath>
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

namespace spinward::daemon {
namespace {

constexpr std::int64_t kInterval = 10'000'000'000;
constexpr std::int64_t kT0 = 1'700'000'000'000'000'000;

AlarmRule Rule(const std::string& point, const std::string& measure, double alert, double danger) {
  AlarmRule rule;
  rule.point_id = point;
  rule.measure = measure;
  rule.unit = "mm/s";
  rule.high_alert = alert;
  rule.high_danger = danger;
  return rule;
}

// P-101 has a velocity rule and a kurtosis rule (Gaussian noise has kurtosis 3; impacts raise it,
// common practice: alert 5, danger 8, no source).
AlarmEngine PumpStation() {
  AlarmEngine engine;
  EXPECT_TRUE(engine.AddRule(Rule("P-101", "velocity_rms_10_1000", 4.5, 7.1)).ok());
  AlarmRule kurtosis = Rule("P-101", "kurtosis", 5.0, 8.0);
  kurtosis.unit.clear();
  EXPECT_TRUE(engine.AddRule(kurtosis).ok());
  EXPECT_TRUE(engine.AddRule(Rule("P-102", "velocity_rms_10_1000", 2.8, 4.5)).ok());
  return engine;
}

SensorHealthVerdict Clipping() {
  SensorHealthVerdict verdict;
  verdict.findings.push_back({SensorCheck::kClipping, "120 of 25600 samples at full scale 490"});
  return verdict;
}

TEST(AlarmEngine, RaisesPerMeasureInNameOrder) {
  AlarmEngine engine = PumpStation();
  AlarmEvaluator& evaluator = engine;  // the seam the pipeline holds
  auto result =
      evaluator.Evaluate("P-101", kT0, {{"velocity_rms_10_1000", 7.5}, {"kurtosis", 6.0}}, {});
  ASSERT_TRUE(result.ok()) << result.message();
  ASSERT_EQ(result->size(), 2u);
  EXPECT_EQ((*result)[0].measure, "kurtosis");
  EXPECT_EQ((*result)[0].to, AlarmState::kAlert);
  EXPECT_EQ((*result)[1].measure, "velocity_rms_10_1000");
  EXPECT_EQ((*result)[1].to, AlarmState::kDanger);
  EXPECT_EQ(*engine.State("P-102", "velocity_rms_10_1000"), AlarmState::kNormal);
}

TEST(AlarmEngine, FaultySensorRaisesSensorFaultAndNoMachineAlarm) {
  AlarmEngine engine = PumpStation();
  // Values far past danger, but the sensor is clipping: they prove nothing about the machine.
  auto result = engine.Evaluate("P-101", kT0, {{"velocity_rms_10_1000", 30.0}, {"kurtosis", 20.0}},
                                Clipping());
  ASSERT_TRUE(result.ok()) << result.message();
  ASSERT_EQ(result->size(), 2u);
  for (const auto& transition : *result) {
    EXPECT_EQ(transition.to, AlarmState::kSensorFault);
    EXPECT_NE(transition.message.find("clipping"), std::string::npos) << transition.message;
  }
  for (int i = 1; i <= 5; ++i) {
    auto more =
        engine.Evaluate("P-101", kT0 + i * kInterval, {{"velocity_rms_10_1000", 30.0}}, Clipping());
    ASSERT_TRUE(more.ok());
    EXPECT_TRUE(more->empty());
  }
  EXPECT_EQ(*engine.State("P-101", "velocity_rms_10_1000"), AlarmState::kSensorFault);

  // The record the pipeline stores is flagged, so storage keeps it out of baselines.
  storage::MeasurementRecord record;
  FlagRecord(Clipping(), record);
  EXPECT_TRUE(record.sensor_fault);
  EXPECT_NE(record.sensor_fault_reason.find("clipping"), std::string::npos);

  // Once the sensor checks pass, the machine is judged again.
  auto healthy =
      engine.Evaluate("P-101", kT0 + 6 * kInterval, {{"velocity_rms_10_1000", 30.0}}, {});
  ASSERT_TRUE(healthy.ok());
  ASSERT_EQ(healthy->size(), 1u);
  EXPECT_EQ((*healthy)[0].from, AlarmState::kSensorFault);
  EXPECT_EQ((*healthy)[0].to, AlarmState::kDanger);
}

TEST(AlarmEngine, NonFiniteValueIsASensorFaultForThatMeasureOnly) {
  AlarmEngine engine = PumpStation();
  auto result = engine.Evaluate(
      "P-101", kT0,
      {{"velocity_rms_10_1000", std::numeric_limits<double>::quiet_NaN()}, {"kurtosis", 3.0}}, {});
  ASSERT_TRUE(result.ok());
  ASSERT_EQ(result->size(), 1u);
  EXPECT_EQ((*result)[0].measure, "velocity_rms_10_1000");
  EXPECT_EQ((*result)[0].to, AlarmState::kSensorFault);
  EXPECT_NE((*result)[0].message.find("not a finite number"), std::string::npos);
  EXPECT_EQ(*engine.State("P-101", "kurtosis"), AlarmState::kNormal);
}

TEST(AlarmEngine, RejectsAnIntervalNotAfterTheLastAndChangesNothing) {
  AlarmEngine engine = PumpStation();
  ASSERT_TRUE(engine.Evaluate("P-101", kT0, {{"velocity_rms_10_1000", 1.0}}, {}).ok());
  auto replay = engine.Evaluate("P-101", kT0, {{"velocity_rms_10_1000", 9.0}}, {});
  ASSERT_FALSE(replay.ok());
  EXPECT_NE(replay.message().find("is not after the last one judged"), std::string::npos)
      << replay.message();
  EXPECT_EQ(*engine.State("P-101", "velocity_rms_10_1000"), AlarmState::kNormal);
  // A measure that had no value then may still take this time.
  EXPECT_TRUE(engine.Evaluate("P-101", kT0, {{"kurtosis", 3.0}}, {}).ok());
}

TEST(AlarmEngine, UnknownPointsAndRulesAreReported) {
  AlarmEngine engine = PumpStation();
  auto none = engine.Evaluate("F-201", kT0, {{"rms", 1.0}}, {});
  ASSERT_TRUE(none.ok());
  EXPECT_TRUE(none->empty());  // a point without rules raises nothing
  EXPECT_FALSE(engine.State("F-201", "rms").ok());
  auto ack = engine.Ack("F-201", "rms", "a.berg", "", kT0);
  ASSERT_FALSE(ack.ok());
  EXPECT_NE(ack.message().find("F-201 rms"), std::string::npos);
  Status duplicate = engine.AddRule(Rule("P-101", "kurtosis", 5.0, 8.0));
  ASSERT_FALSE(duplicate.ok());
  EXPECT_NE(duplicate.message().find("second alarm rule for P-101 kurtosis"), std::string::npos);
  Status invalid = engine.AddRule(Rule("F-201", "rms", 8.0, 5.0));
  ASSERT_FALSE(invalid.ok());
  EXPECT_NE(invalid.message().find("high_alert (8) must be below high_danger (5)"),
            std::string::npos);
}

TEST(AlarmEngine, StaleCheckReportsSilentPoints) {
  AlarmEngine engine;
  AlarmRule rule = Rule("P-102", "velocity_rms_10_1000", 2.8, 4.5);
  rule.stale_after_ns = 6 * kInterval;
  ASSERT_TRUE(engine.AddRule(rule).ok());
  ASSERT_TRUE(engine.Evaluate("P-102", kT0, {{"velocity_rms_10_1000", 1.0}}, {}).ok());
  EXPECT_TRUE(engine.CheckStale(kT0 + 5 * kInterval).empty());
  auto stale = engine.CheckStale(kT0 + 6 * kInterval);
  ASSERT_EQ(stale.size(), 1u);
  EXPECT_EQ(stale[0].to, AlarmState::kStale);
  EXPECT_EQ(stale[0].time_ns, kT0 + 6 * kInterval);
}

TEST(AlarmEngine, LearningPointRaisesNothingUntilItEnds) {
  AlarmEngine engine = PumpStation();
  auto learning = engine.SetLearning("P-101", true, kT0);
  ASSERT_TRUE(learning.ok());
  EXPECT_EQ(learning->size(), 2u);
  auto quiet = engine.Evaluate("P-101", kT0 + kInterval, {{"velocity_rms_10_1000", 9.0}}, {});
  ASSERT_TRUE(quiet.ok());
  EXPECT_TRUE(quiet->empty());
  EXPECT_FALSE(engine.SetLearning("F-201", true, kT0).ok());
}

// A restart: engine `before` runs, its snapshots go through the text form storage keeps, and a new
// engine restores them.
AlarmEngine Restart(const AlarmEngine& before, const std::vector<AlarmRule>& rules) {
  AlarmEngine after;
  for (const auto& rule : rules) EXPECT_TRUE(after.AddRule(rule).ok());
  for (AlarmSnapshot snapshot : before.Snapshots()) {
    auto state = ParseAlarmState(ToString(snapshot.state));
    EXPECT_TRUE(state.ok());
    snapshot.state = *state;
    Status restored = after.Restore(snapshot);
    EXPECT_TRUE(restored.ok()) << restored.message();
  }
  return after;
}

TEST(AlarmEngine, RestoreNeitherRaisesAgainNorForgetsALatch) {
  AlarmRule rule = Rule("P-101", "velocity_rms_10_1000", 4.5, 7.1);
  rule.latching = true;
  AlarmEngine before;
  ASSERT_TRUE(before.AddRule(rule).ok());
  auto raised = before.Evaluate("P-101", kT0, {{"velocity_rms_10_1000", 8.0}}, {});
  ASSERT_TRUE(raised.ok());
  ASSERT_EQ(raised->size(), 1u);

  AlarmEngine after = Restart(before, {rule});
  EXPECT_EQ(*after.State("P-101", "velocity_rms_10_1000"), AlarmState::kDanger);
  auto still = after.Evaluate("P-101", kT0 + kInterval, {{"velocity_rms_10_1000", 8.0}}, {});
  ASSERT_TRUE(still.ok());
  EXPECT_TRUE(still->empty()) << "the danger alarm was raised a second time";
  auto quiet = after.Evaluate("P-101", kT0 + 2 * kInterval, {{"velocity_rms_10_1000", 1.0}}, {});
  ASSERT_TRUE(quiet.ok());
  EXPECT_TRUE(quiet->empty()) << "the latch was forgotten";
  // The interval order survives too: the restart does not accept a replayed interval.
  EXPECT_FALSE(after.Evaluate("P-101", kT0, {{"velocity_rms_10_1000", 1.0}}, {}).ok());
  auto acked = after.Ack("P-101", "velocity_rms_10_1000", "j.okafor", "bearing replaced",
                         kT0 + 3 * kInterval);
  ASSERT_TRUE(acked.ok()) << acked.message();
  ASSERT_TRUE(acked->has_value());
  EXPECT_EQ((*acked)->from, AlarmState::kDanger);
  EXPECT_EQ((*acked)->to, AlarmState::kNormal);
}

TEST(AlarmEngine, RestoreKeepsOnDelayAndOffDelayProgress) {
  AlarmRule rule = Rule("P-102", "velocity_rms_10_1000", 2.8, 4.5);
  rule.on_delay_n = 3;
  rule.on_delay_m = 3;
  rule.off_delay_intervals = 2;
  AlarmEngine before;
  ASSERT_TRUE(before.AddRule(rule).ok());
  for (int i = 0; i < 2; ++i) {
    auto r = before.Evaluate("P-102", kT0 + i * kInterval, {{"velocity_rms_10_1000", 3.0}}, {});
    ASSERT_TRUE(r.ok());
    EXPECT_TRUE(r->empty());
  }
  AlarmEngine after = Restart(before, {rule});
  auto raised = after.Evaluate("P-102", kT0 + 2 * kInterval, {{"velocity_rms_10_1000", 3.0}}, {});
  ASSERT_TRUE(raised.ok());
  ASSERT_EQ(raised->size(), 1u) << "the on-delay history was lost in the restart";
  EXPECT_EQ((*raised)[0].to, AlarmState::kAlert);

  auto first_low =
      after.Evaluate("P-102", kT0 + 3 * kInterval, {{"velocity_rms_10_1000", 1.0}}, {});
  ASSERT_TRUE(first_low.ok());
  EXPECT_TRUE(first_low->empty());
  AlarmEngine again = Restart(after, {rule});
  auto cleared = again.Evaluate("P-102", kT0 + 4 * kInterval, {{"velocity_rms_10_1000", 1.0}}, {});
  ASSERT_TRUE(cleared.ok());
  ASSERT_EQ(cleared->size(), 1u) << "the off-delay count was lost in the restart";
  EXPECT_EQ((*cleared)[0].to, AlarmState::kNormal);
}

TEST(AlarmEngine, RestoreRejectsInconsistentSnapshots) {
  AlarmEngine engine = PumpStation();
  AlarmSnapshot snapshot;
  snapshot.point_id = "P-101";
  snapshot.measure = "velocity_rms_10_1000";
  snapshot.state = AlarmState::kAlert;  // but nothing in the fields holds an alert
  Status status = engine.Restore(snapshot);
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.message().find("state 'alert' disagrees with its fields, which give 'normal'"),
            std::string::npos)
      << status.message();

  snapshot.state = AlarmState::kNormal;
  snapshot.on_delay_history = "01x";
  status = engine.Restore(snapshot);
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.message().find("on_delay_history '01x'"), std::string::npos);

  snapshot.on_delay_history.clear();
  snapshot.condition = AlarmState::kStale;
  EXPECT_FALSE(engine.Restore(snapshot).ok());

  snapshot.condition = AlarmState::kNormal;
  snapshot.measure = "crest_factor";
  status = engine.Restore(snapshot);
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.message().find("no alarm rule for P-101 crest_factor"), std::string::npos);
  EXPECT_EQ(*engine.State("P-101", "velocity_rms_10_1000"), AlarmState::kNormal);
}

}  // namespace
}  // namespace spinward::daemon
