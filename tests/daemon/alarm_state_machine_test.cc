// The alarm state machine of one point and measure: deadband, N-of-M on-delay, off-delay, latching
// and acknowledgement, stale, sensor faults and learning.
// Behaviour checked against alarm-management practice (ISA-18.2 / IEC 62682 as summarised in
// REFERENCE_VALUES.md "Alarm practice"): a deadband clears an alarm only once the value passes the
// setpoint less the deadband; an on-delay of N of M raises only after N of the last M samples
// exceed; an off-delay clears only after the value stayed back for the delay; a latched alarm stays
// until acknowledged. Limits are ISO 10816-3:2009 Annex A, group 1 rigid (B/C 4.5, C/D 7.1 mm/s),
// as transcribed in REFERENCE_VALUES.md.
#include "spinward/daemon/alarm_state_machine.h"

#include <gtest/gtest.h>

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace spinward::daemon {
namespace {

constexpr std::int64_t kInterval = 10'000'000'000;  // 10 s intervals
constexpr std::int64_t kSecond = 1'000'000'000;

AlarmRule PumpRule() {
  AlarmRule rule;
  rule.point_id = "P-101";
  rule.measure = "velocity_rms_10_1000";
  rule.unit = "mm/s";
  rule.high_alert = 4.5;
  rule.high_danger = 7.1;
  return rule;
}

// Feeds values one interval apart and collects every transition.
class Feeder {
 public:
  explicit Feeder(const AlarmRule& rule) : machine_(rule) {
    EXPECT_TRUE(rule.Validate().ok()) << rule.Validate().message();
  }
  std::optional<AlarmTransition> Value(double value) {
    time_ += kInterval;
    auto transition = machine_.OnValue(time_, value);
    if (transition) transitions_.push_back(*transition);
    return transition;
  }
  std::vector<AlarmTransition> Values(const std::vector<double>& values) {
    std::vector<AlarmTransition> out;
    for (double value : values) {
      if (auto transition = Value(value)) out.push_back(*transition);
    }
    return out;
  }
  AlarmStateMachine& machine() { return machine_; }
  AlarmState state() const { return machine_.state(); }
  std::int64_t time() const { return time_; }
  void Advance(std::int64_t ns) { time_ += ns; }

 private:
  AlarmStateMachine machine_;
  std::int64_t time_ = 1'700'000'000 * kSecond;
  std::vector<AlarmTransition> transitions_;
};

bool EndsWithAdvisory(const std::string& message) {
  const auto at = message.rfind(" Advisory: ");
  return at != std::string::npos && message.back() == '.' &&
         message.find('.', at + 11) == message.size() - 1;
}

TEST(AlarmStateMachine, RaisesAtTheSetpointAndReportsTheCrossing) {
  Feeder feeder(PumpRule());
  EXPECT_FALSE(feeder.Value(4.49).has_value());
  auto raised = feeder.Value(4.5);  // at the setpoint counts, as ISO zone C starts at B/C
  ASSERT_TRUE(raised.has_value());
  EXPECT_EQ(raised->from, AlarmState::kNormal);
  EXPECT_EQ(raised->to, AlarmState::kAlert);
  EXPECT_EQ(raised->time_ns, feeder.time());
  EXPECT_EQ(raised->point_id, "P-101");
  EXPECT_EQ(raised->measure, "velocity_rms_10_1000");
  EXPECT_DOUBLE_EQ(*raised->value, 4.5);
  EXPECT_DOUBLE_EQ(*raised->limit, 4.5);
  EXPECT_NE(raised->message.find("high alert limit 4.5 mm/s"), std::string::npos)
      << raised->message;
  EXPECT_TRUE(EndsWithAdvisory(raised->message)) << raised->message;
}

TEST(AlarmStateMachine, DeadbandHoldsTheAlarmUntilTheResetLevel) {
  Feeder feeder(PumpRule());  // 5 % deadband: reset at 4.5 - 0.225 = 4.275 mm/s (arithmetic)
  ASSERT_TRUE(feeder.Value(4.6).has_value());
  EXPECT_FALSE(feeder.Value(4.4).has_value());
  EXPECT_FALSE(feeder.Value(4.28).has_value());
  EXPECT_EQ(feeder.state(), AlarmState::kAlert);
  auto cleared = feeder.Value(4.27);
  ASSERT_TRUE(cleared.has_value());
  EXPECT_EQ(cleared->to, AlarmState::kNormal);
  EXPECT_NEAR(*cleared->limit, 4.275, 1e-12);
  EXPECT_TRUE(EndsWithAdvisory(cleared->message)) << cleared->message;
}

TEST(AlarmStateMachine, DeadbandStopsChatterThatNoDeadbandWouldShow) {
  const std::vector<double> hovering = {4.6, 4.4, 4.6, 4.4, 4.6, 4.4, 4.6, 4.4};
  Feeder with_deadband(PumpRule());
  EXPECT_EQ(with_deadband.Values(hovering).size(), 1u);

  AlarmRule bare = PumpRule();
  bare.deadband = 0.0;
  Feeder without(bare);
  EXPECT_EQ(without.Values(hovering).size(), hovering.size());  // every interval flips
}

TEST(AlarmStateMachine, AbsoluteDeadbandIsInTheMeasureUnit) {
  AlarmRule rule = PumpRule();
  rule.deadband_kind = DeadbandKind::kAbsolute;
  rule.deadband = 0.5;  // reset at 4.0 mm/s
  Feeder feeder(rule);
  ASSERT_TRUE(feeder.Value(5.0).has_value());
  EXPECT_FALSE(feeder.Value(4.01).has_value());
  auto cleared = feeder.Value(3.99);
  ASSERT_TRUE(cleared.has_value());
  EXPECT_NEAR(*cleared->limit, 4.0, 1e-12);
}

TEST(AlarmStateMachine, OnDelayNeedsNOfTheLastMIntervals) {
  AlarmRule rule = PumpRule();
  rule.on_delay_n = 3;
  rule.on_delay_m = 5;
  Feeder feeder(rule);
  // Isolated spikes, never three within five intervals: no alarm.
  EXPECT_TRUE(feeder.Values({5.0, 1.0, 1.0, 1.0, 5.0, 1.0, 1.0, 1.0, 5.0, 1.0, 1.0}).empty());
  // 5, 1, 5, 1: two of the last five; the third exceedance raises.
  EXPECT_TRUE(feeder.Values({5.0, 1.0, 5.0, 1.0}).empty());
  auto raised = feeder.Value(5.0);
  ASSERT_TRUE(raised.has_value());
  EXPECT_EQ(raised->to, AlarmState::kAlert);
  EXPECT_NE(raised->message.find("in 3 of the last 5 interval"), std::string::npos)
      << raised->message;
}

TEST(AlarmStateMachine, OnDelayCountsDangerIntervalsTowardsAlert) {
  AlarmRule rule = PumpRule();
  rule.on_delay_n = 2;
  rule.on_delay_m = 3;
  Feeder feeder(rule);
  EXPECT_FALSE(feeder.Value(5.0).has_value());
  auto alert = feeder.Value(8.0);  // two at alert or above, one at danger
  ASSERT_TRUE(alert.has_value());
  EXPECT_EQ(alert->to, AlarmState::kAlert);
  auto danger = feeder.Value(8.0);  // now two at danger
  ASSERT_TRUE(danger.has_value());
  EXPECT_EQ(danger->from, AlarmState::kAlert);
  EXPECT_EQ(danger->to, AlarmState::kDanger);
  EXPECT_DOUBLE_EQ(*danger->limit, 7.1);
}

TEST(AlarmStateMachine, OffDelayWaitsForConsecutiveIntervalsBelowReset) {
  AlarmRule rule = PumpRule();
  rule.off_delay_intervals = 3;
  Feeder feeder(rule);
  ASSERT_TRUE(feeder.Value(5.0).has_value());
  EXPECT_TRUE(feeder.Values({3.0, 3.0}).empty());
  EXPECT_FALSE(feeder.Value(4.4).has_value());  // back inside the deadband: the count restarts
  EXPECT_TRUE(feeder.Values({3.0, 3.0}).empty());
  EXPECT_EQ(feeder.state(), AlarmState::kAlert);
  auto cleared = feeder.Value(3.0);
  ASSERT_TRUE(cleared.has_value());
  EXPECT_EQ(cleared->to, AlarmState::kNormal);
  EXPECT_NE(cleared->message.find("for 3 interval"), std::string::npos) << cleared->message;
}

TEST(AlarmStateMachine, ANewRiseAfterClearingNeedsFreshIntervals) {
  AlarmRule rule = PumpRule();
  rule.on_delay_n = 2;
  rule.on_delay_m = 4;
  Feeder feeder(rule);
  EXPECT_EQ(feeder.Values({5.0, 5.0}).size(), 1u);
  ASSERT_TRUE(feeder.Value(1.0).has_value());  // cleared
  // The two old exceedances are still inside the window of four, but they were answered.
  EXPECT_FALSE(feeder.Value(5.0).has_value());
  auto raised = feeder.Value(5.0);
  ASSERT_TRUE(raised.has_value());
  EXPECT_EQ(raised->to, AlarmState::kAlert);
}

TEST(AlarmStateMachine, StepsDownFromDangerToAlert) {
  Feeder feeder(PumpRule());
  ASSERT_TRUE(feeder.Value(8.0).has_value());
  EXPECT_EQ(feeder.state(), AlarmState::kDanger);
  EXPECT_FALSE(feeder.Value(6.8).has_value());  // above 7.1 - 0.355 = 6.745
  auto step = feeder.Value(6.0);
  ASSERT_TRUE(step.has_value());
  EXPECT_EQ(step->from, AlarmState::kDanger);
  EXPECT_EQ(step->to, AlarmState::kAlert);
  EXPECT_NEAR(*step->limit, 6.745, 1e-12);
  auto down = feeder.Value(1.0);
  ASSERT_TRUE(down.has_value());
  EXPECT_EQ(down->to, AlarmState::kNormal);
}

TEST(AlarmStateMachine, LowLimitsRaiseWhenTheValueFalls) {
  AlarmRule rule = PumpRule();
  rule.point_id = "F-201";  // a fan whose belt slips goes quiet
  rule.low_alert = 0.5;
  rule.low_danger = 0.2;
  Feeder feeder(rule);
  EXPECT_FALSE(feeder.Value(1.5).has_value());
  auto alert = feeder.Value(0.3);
  ASSERT_TRUE(alert.has_value());
  EXPECT_EQ(alert->to, AlarmState::kAlert);
  EXPECT_DOUBLE_EQ(*alert->limit, 0.5);
  EXPECT_NE(alert->message.find("below the low alert limit 0.5"), std::string::npos)
      << alert->message;
  auto danger = feeder.Value(0.1);
  ASSERT_TRUE(danger.has_value());
  EXPECT_EQ(danger->to, AlarmState::kDanger);
  // Past the low danger reset (0.2 + 0.01 = 0.21) but inside the low alert reset
  // (0.5 + 0.025 = 0.525): one step down.
  auto step = feeder.Value(0.52);
  ASSERT_TRUE(step.has_value());
  EXPECT_EQ(step->to, AlarmState::kAlert);
  EXPECT_NEAR(*step->limit, 0.21, 1e-12);
  auto cleared = feeder.Value(0.6);
  ASSERT_TRUE(cleared.has_value());
  EXPECT_EQ(cleared->to, AlarmState::kNormal);
  EXPECT_NEAR(*cleared->limit, 0.525, 1e-12);
}

TEST(AlarmStateMachine, LatchedAlarmStaysUntilAcknowledged) {
  AlarmRule rule = PumpRule();
  rule.latching = true;
  Feeder feeder(rule);
  ASSERT_TRUE(feeder.Value(5.0).has_value());
  EXPECT_TRUE(feeder.Values({1.0, 1.0, 1.0}).empty());
  EXPECT_EQ(feeder.state(), AlarmState::kAlert);

  auto acked = feeder.machine().Acknowledge("j.okafor", "coupling checked", feeder.time() + 5);
  ASSERT_TRUE(acked.ok()) << acked.message();
  ASSERT_TRUE(acked->has_value());
  EXPECT_EQ((*acked)->from, AlarmState::kAlert);
  EXPECT_EQ((*acked)->to, AlarmState::kNormal);
  EXPECT_EQ((*acked)->time_ns, feeder.time() + 5);
  EXPECT_NE((*acked)->message.find("j.okafor"), std::string::npos);

  AlarmSnapshot snapshot = feeder.machine().Snapshot();
  ASSERT_TRUE(snapshot.last_ack.has_value());
  EXPECT_EQ(snapshot.last_ack->by, "j.okafor");
  EXPECT_EQ(snapshot.last_ack->note, "coupling checked");
  EXPECT_EQ(snapshot.last_ack->time_ns, feeder.time() + 5);
  EXPECT_EQ(snapshot.last_ack->level, AlarmState::kAlert);

  auto nothing = feeder.machine().Acknowledge("j.okafor", "", feeder.time() + 6);
  ASSERT_FALSE(nothing.ok());
  EXPECT_NE(nothing.message().find("nothing to acknowledge"), std::string::npos);
}

TEST(AlarmStateMachine, AcknowledgedActiveAlarmClearsWithTheValue) {
  AlarmRule rule = PumpRule();
  rule.latching = true;
  Feeder feeder(rule);
  ASSERT_TRUE(feeder.Value(5.0).has_value());
  auto acked = feeder.machine().Acknowledge("m.reyes", "", feeder.time());
  ASSERT_TRUE(acked.ok());
  EXPECT_FALSE(acked->has_value());  // still active: nothing to release yet
  auto again = feeder.machine().Acknowledge("k.lund", "", feeder.time());
  ASSERT_FALSE(again.ok());
  EXPECT_NE(again.message().find("already acknowledged by m.reyes"), std::string::npos);
  auto cleared = feeder.Value(1.0);
  ASSERT_TRUE(cleared.has_value());
  EXPECT_EQ(cleared->to, AlarmState::kNormal);
}

TEST(AlarmStateMachine, LatchHoldsTheHighestLevelAndAckReleasesToWhatTheValuesHold) {
  AlarmRule rule = PumpRule();
  rule.latching = true;
  Feeder feeder(rule);
  ASSERT_TRUE(feeder.Value(8.0).has_value());
  EXPECT_FALSE(feeder.Value(5.0).has_value());
  EXPECT_EQ(feeder.state(), AlarmState::kDanger);
  auto acked = feeder.machine().Acknowledge("m.reyes", "", feeder.time());
  ASSERT_TRUE(acked.ok());
  ASSERT_TRUE(acked->has_value());
  EXPECT_EQ((*acked)->to, AlarmState::kAlert);
  // A rise after the acknowledgement is a new alarm and needs its own.
  auto danger = feeder.Value(8.0);
  ASSERT_TRUE(danger.has_value());
  EXPECT_EQ(danger->to, AlarmState::kDanger);
  EXPECT_FALSE(feeder.Value(1.0).has_value());
  EXPECT_EQ(feeder.state(), AlarmState::kDanger);
}

TEST(AlarmStateMachine, AckRequiresAName) {
  Feeder feeder(PumpRule());
  ASSERT_TRUE(feeder.Value(5.0).has_value());
  auto acked = feeder.machine().Acknowledge("", "note", feeder.time());
  ASSERT_FALSE(acked.ok());
  EXPECT_NE(acked.message().find("who acknowledges is empty"), std::string::npos);
}

TEST(AlarmStateMachine, GoesStaleWhenNoIntervalArrives) {
  AlarmRule rule = PumpRule();
  rule.stale_after_ns = 60 * kSecond;
  AlarmStateMachine machine(rule);
  const std::int64_t t0 = 1'700'000'000 * kSecond;
  EXPECT_FALSE(machine.CheckStale(t0).has_value());  // starts the wait: no data yet
  EXPECT_FALSE(machine.CheckStale(t0 + 59 * kSecond).has_value());
  auto never = machine.CheckStale(t0 + 60 * kSecond);
  ASSERT_TRUE(never.has_value());
  EXPECT_EQ(never->to, AlarmState::kStale);
  EXPECT_FALSE(never->value.has_value());
  EXPECT_TRUE(EndsWithAdvisory(never->message)) << never->message;
  EXPECT_FALSE(machine.CheckStale(t0 + 61 * kSecond).has_value());  // reported once

  auto back = machine.OnValue(t0 + 70 * kSecond, 1.0);
  ASSERT_TRUE(back.has_value());
  EXPECT_EQ(back->from, AlarmState::kStale);
  EXPECT_EQ(back->to, AlarmState::kNormal);
  EXPECT_FALSE(machine.CheckStale(t0 + 129 * kSecond).has_value());
  auto again = machine.CheckStale(t0 + 130 * kSecond);
  ASSERT_TRUE(again.has_value());
  EXPECT_NE(again->message.find("no interval for 60 s"), std::string::npos) << again->message;
}

TEST(AlarmStateMachine, StaleOffWhenNotConfigured) {
  AlarmStateMachine machine(PumpRule());
  EXPECT_FALSE(machine.CheckStale(0).has_value());
  EXPECT_FALSE(machine.CheckStale(std::int64_t{1} << 62).has_value());
}

TEST(AlarmStateMachine, StaleKeepsAnUnacknowledgedLatch) {
  AlarmRule rule = PumpRule();
  rule.latching = true;
  rule.stale_after_ns = 60 * kSecond;
  Feeder feeder(rule);
  ASSERT_TRUE(feeder.Value(5.0).has_value());
  auto stale = feeder.machine().CheckStale(feeder.time() + 61 * kSecond);
  ASSERT_TRUE(stale.has_value());
  feeder.Advance(61 * kSecond);
  auto back = feeder.Value(1.0);
  ASSERT_TRUE(back.has_value());
  EXPECT_EQ(back->to, AlarmState::kAlert);  // not forgotten across the silence
}

TEST(AlarmStateMachine, SensorFaultSuspendsJudgementAndResetsTheOnDelay) {
  AlarmRule rule = PumpRule();
  rule.on_delay_n = 2;
  rule.on_delay_m = 3;
  Feeder feeder(rule);
  EXPECT_FALSE(feeder.Value(5.0).has_value());
  auto fault =
      feeder.machine().OnSensorFault(feeder.time() + kInterval, "clipping: 40 samples", 12.0);
  ASSERT_TRUE(fault.has_value());
  EXPECT_EQ(fault->to, AlarmState::kSensorFault);
  EXPECT_FALSE(fault->limit.has_value());
  EXPECT_NE(fault->message.find("clipping: 40 samples"), std::string::npos);
  EXPECT_TRUE(EndsWithAdvisory(fault->message)) << fault->message;
  feeder.Advance(kInterval);
  // Recovery: the exceedance from before the fault does not count towards the on-delay.
  auto back = feeder.Value(5.0);
  ASSERT_TRUE(back.has_value());
  EXPECT_EQ(back->to, AlarmState::kNormal);
  auto raised = feeder.Value(5.0);
  ASSERT_TRUE(raised.has_value());
  EXPECT_EQ(raised->to, AlarmState::kAlert);
}

TEST(AlarmStateMachine, LearningRaisesNoMachineAlarm) {
  Feeder feeder(PumpRule());
  auto learning = feeder.machine().SetLearning(true, feeder.time());
  ASSERT_TRUE(learning.has_value());
  EXPECT_EQ(learning->to, AlarmState::kLearning);
  EXPECT_TRUE(feeder.Values({9.0, 9.0, 9.0}).empty());
  EXPECT_EQ(feeder.state(), AlarmState::kLearning);

  // A sensor fault is not a machine alarm: it shows while learning.
  auto fault = feeder.machine().OnSensorFault(feeder.time() + 1, "flatline", std::nullopt);
  ASSERT_TRUE(fault.has_value());
  EXPECT_EQ(fault->to, AlarmState::kSensorFault);
  auto still_learning = feeder.Value(9.0);
  ASSERT_TRUE(still_learning.has_value());
  EXPECT_EQ(still_learning->to, AlarmState::kLearning);

  auto done = feeder.machine().SetLearning(false, feeder.time() + 1);
  ASSERT_TRUE(done.has_value());
  EXPECT_EQ(done->to, AlarmState::kNormal);
  auto danger = feeder.Value(9.0);
  ASSERT_TRUE(danger.has_value());
  EXPECT_EQ(danger->to, AlarmState::kDanger);
}

TEST(AlarmStateMachine, EveryMessageEndsWithAnAdvisory) {
  AlarmRule rule = PumpRule();
  rule.latching = true;
  rule.stale_after_ns = 30 * kSecond;
  Feeder feeder(rule);
  std::vector<AlarmTransition> all = feeder.Values({5.0, 8.0});
  if (auto t = feeder.machine().SetLearning(true, feeder.time())) all.push_back(*t);
  if (auto t = feeder.machine().SetLearning(false, feeder.time())) all.push_back(*t);
  if (auto t = feeder.machine().OnSensorFault(feeder.time() + 1, "dropout", {})) all.push_back(*t);
  if (auto t = feeder.machine().CheckStale(feeder.time() + 100 * kSecond)) all.push_back(*t);
  feeder.Advance(100 * kSecond);
  for (const auto& t : feeder.Values({1.0})) all.push_back(t);
  auto acked = feeder.machine().Acknowledge("a.berg", "", feeder.time());
  ASSERT_TRUE(acked.ok()) << acked.message();
  if (*acked) all.push_back(**acked);
  ASSERT_GE(all.size(), 7u);
  for (const auto& t : all) {
    EXPECT_TRUE(EndsWithAdvisory(t.message)) << t.message;
    EXPECT_NE(t.from, t.to) << t.message;
  }
}

}  // namespace
}  // namespace spinward::daemon
