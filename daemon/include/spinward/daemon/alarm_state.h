// The state of one alarm (one point and measure) as operators see it, and its stable text form.
// Machine states (normal, alert, danger) come from the rule's limits; sensor_fault, stale and
// learning say that the machine state is not known or not judged: a faulty sensor can fake or hide
// a machine alarm, a silent point has no recent value, a learning point has no baseline yet.
// The text form is what storage keeps and messaging publishes; it never changes once released.
// Thread-safety: plain values and pure functions.
#pragma once

#include <string_view>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

enum class AlarmState {
  kNormal,
  kAlert,
  kDanger,
  kSensorFault,
  kStale,
  kLearning,
};

// "normal", "alert", "danger", "sensor_fault", "stale", "learning".
std::string_view ToString(AlarmState state);

// Inverse of ToString; anything else is an error naming the text.
Result<AlarmState> ParseAlarmState(std::string_view text);

// True for normal, alert and danger: states that say something about the machine.
bool IsMachineState(AlarmState state);

// How much a state asks for attention, for summaries that show a point's worst state (report,
// retained point states): danger 6, alert 5, sensor_fault 4, stale 3, learning 2, normal 1, and 0
// for any other text (e.g. "" for no state).
inline constexpr int kSeverityNeedsAttention = 3;  // stale, a faulty sensor, alert or danger
int AlarmStateSeverity(std::string_view state_text);

}  // namespace spinward::daemon
