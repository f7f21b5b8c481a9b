#include "spinward/daemon/alarm_state.h"

#include <array>
#include <string>
#include <utility>

namespace spinward::daemon {
namespace {

constexpr std::array<std::pair<AlarmState, std::string_view>, 6> kNames = {{
    {AlarmState::kNormal, "normal"},
    {AlarmState::kAlert, "alert"},
    {AlarmState::kDanger, "danger"},
    {AlarmState::kSensorFault, "sensor_fault"},
    {AlarmState::kStale, "stale"},
    {AlarmState::kLearning, "learning"},
}};

}  // namespace

std::string_view ToString(AlarmState state) {
  for (const auto& [value, name] : kNames) {
    if (value == state) return name;
  }
  return "unknown";
}

Result<AlarmState> ParseAlarmState(std::string_view text) {
  for (const auto& [value, name] : kNames) {
    if (name == text) return value;
  }
  return Error{"unknown alarm state '" + std::string(text) +
               "' (expected normal, alert, danger, sensor_fault, stale or learning)"};
}

bool IsMachineState(AlarmState state) {
  return state == AlarmState::kNormal || state == AlarmState::kAlert ||
         state == AlarmState::kDanger;
}

int AlarmStateSeverity(std::string_view state_text) {
  auto state = ParseAlarmState(state_text);
  if (!state.ok()) return 0;
  switch (*state) {
    case AlarmState::kDanger:
      return 6;
    case AlarmState::kAlert:
      return 5;
    case AlarmState::kSensorFault:
      return 4;
    case AlarmState::kStale:
      return 3;
    case AlarmState::kLearning:
      return 2;
    case AlarmState::kNormal:
      return 1;
  }
  return 0;
}

}  // namespace spinward::daemon
