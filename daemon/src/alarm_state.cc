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

}  // namespace spinward::daemon
