// One change of an alarm's state: the event the alarm engine hands to storage (the alarm log) and
// to messaging. Every state change is reported exactly once, at the interval (or check) that caused
// it. `value` and `limit` are in the measure's unit; they are empty when they do not apply (a stale
// point has no value; a sensor fault crosses no machine limit). `message` is one factual sentence
// or two, ending with an advisory note.
// Thread-safety: a plain value.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "spinward/daemon/alarm_state.h"

namespace spinward::daemon {

struct AlarmTransition {
  std::int64_t time_ns = 0;  // UTC ns: the interval end, the stale check or the acknowledgement
  std::string point_id;
  std::string measure;
  AlarmState from = AlarmState::kNormal;
  AlarmState to = AlarmState::kNormal;
  std::optional<double> value;  // the value that caused the change
  std::optional<double> limit;  // the setpoint crossed, or the reset level when clearing
  std::string message;
};

}  // namespace spinward::daemon
