// The text form of alarm states, as storage and messaging carry it.
#include "spinward/daemon/alarm_state.h"

#include <gtest/gtest.h>

namespace spinward::daemon {
namespace {

TEST(AlarmState, TextRoundTrips) {
  for (AlarmState state : {AlarmState::kNormal, AlarmState::kAlert, AlarmState::kDanger,
                           AlarmState::kSensorFault, AlarmState::kStale, AlarmState::kLearning}) {
    Result<AlarmState> parsed = ParseAlarmState(ToString(state));
    ASSERT_TRUE(parsed.ok()) << parsed.message();
    EXPECT_EQ(*parsed, state);
  }
  // The stored spellings are a format: they must not drift.
  EXPECT_EQ(ToString(AlarmState::kSensorFault), "sensor_fault");
  EXPECT_EQ(ToString(AlarmState::kDanger), "danger");
}

TEST(AlarmState, UnknownTextIsNamed) {
  Result<AlarmState> parsed = ParseAlarmState("trip");
  ASSERT_FALSE(parsed.ok());
  EXPECT_NE(parsed.message().find("'trip'"), std::string::npos) << parsed.message();
  EXPECT_FALSE(ParseAlarmState("Alert").ok());  // case matters in the stored form
}

TEST(AlarmState, OnlyThreeStatesJudgeTheMachine) {
  EXPECT_TRUE(IsMachineState(AlarmState::kDanger));
  EXPECT_TRUE(IsMachineState(AlarmState::kNormal));
  EXPECT_FALSE(IsMachineState(AlarmState::kSensorFault));
  EXPECT_FALSE(IsMachineState(AlarmState::kStale));
  EXPECT_FALSE(IsMachineState(AlarmState::kLearning));
}

}  // namespace
}  // namespace spinward::daemon
