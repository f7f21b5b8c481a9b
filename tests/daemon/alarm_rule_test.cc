// Alarm rule validation: each bad field is named with its value.
#include "spinward/daemon/alarm_rule.h"

#include <gtest/gtest.h>

#include <limits>
#include <string>

namespace spinward::daemon {
namespace {

// ISO 10816-3:2009 Annex A (as transcribed in REFERENCE_VALUES.md), group 1 rigid: B/C 4.5,
// C/D 7.1.
AlarmRule PumpRule() {
  AlarmRule rule;
  rule.point_id = "P-101";
  rule.measure = "velocity_rms_10_1000";
  rule.unit = "mm/s";
  rule.high_alert = 4.5;
  rule.high_danger = 7.1;
  return rule;
}

void ExpectRejected(const AlarmRule& rule, const std::string& fragment) {
  Status status = rule.Validate();
  EXPECT_FALSE(status.ok()) << "expected a problem mentioning '" << fragment << "'";
  EXPECT_NE(status.message().find(fragment), std::string::npos) << status.message();
}

TEST(AlarmRule, DefaultsWithLimitsAreValid) {
  AlarmRule rule = PumpRule();
  EXPECT_TRUE(rule.Validate().ok()) << rule.Validate().message();
  // Default deadband is a few percent of the setpoint (ISA-18.2 practice, REFERENCE_VALUES):
  // 5 % of 4.5 mm/s is 0.225 mm/s.
  EXPECT_NEAR(rule.DeadbandFor(4.5), 0.225, 1e-12);
}

TEST(AlarmRule, NamesBadFields) {
  AlarmRule rule = PumpRule();
  rule.high_alert = 7.1;
  rule.high_danger = 4.5;
  ExpectRejected(rule, "high_alert (7.1) must be below high_danger (4.5)");

  rule = PumpRule();
  rule.on_delay_n = 5;
  rule.on_delay_m = 3;
  ExpectRejected(rule, "on_delay_n (5) must not exceed on_delay_m (3)");

  rule = PumpRule();
  rule.on_delay_n = 0;
  ExpectRejected(rule, "on_delay_n must be at least 1, got 0");

  rule = PumpRule();
  rule.on_delay_m = AlarmRule::kMaxOnDelayWindow + 1;
  ExpectRejected(rule, "on_delay_m must be at most 64");

  rule = PumpRule();
  rule.deadband = -1.0;
  ExpectRejected(rule, "deadband must be zero or positive, got -1");

  rule = PumpRule();
  rule.deadband = 60.0;
  ExpectRejected(rule, "deadband of 60 %");

  rule = PumpRule();
  rule.off_delay_intervals = 0;
  ExpectRejected(rule, "off_delay_intervals must be at least 1");

  rule = PumpRule();
  rule.stale_after_ns = -5;
  ExpectRejected(rule, "stale_after_ns");

  rule = PumpRule();
  rule.point_id.clear();
  ExpectRejected(rule, "point_id is empty");

  rule = PumpRule();
  rule.measure.clear();
  ExpectRejected(rule, "measure is empty");

  rule = PumpRule();
  rule.high_danger = std::numeric_limits<double>::quiet_NaN();
  ExpectRejected(rule, "high_danger is not finite");
}

TEST(AlarmRule, LowLimitsMustSitBelowHighOnes) {
  AlarmRule rule = PumpRule();
  rule.low_alert = 0.5;
  rule.low_danger = 0.2;
  EXPECT_TRUE(rule.Validate().ok()) << rule.Validate().message();

  rule.low_danger = 0.8;
  ExpectRejected(rule, "low_danger (0.8) must be below low_alert (0.5)");

  rule = PumpRule();
  rule.low_alert = 5.0;
  ExpectRejected(rule, "low_alert (5) must be below high_alert (4.5)");

  // Absolute deadband of 1 mm/s: low reset 3.6 + 1 = 4.6 reaches the high reset 4.5 - 1 = 3.5.
  rule = PumpRule();
  rule.low_alert = 3.6;
  rule.deadband_kind = DeadbandKind::kAbsolute;
  rule.deadband = 1.0;
  ExpectRejected(rule, "reset level of low_alert");
}

}  // namespace
}  // namespace spinward::daemon
