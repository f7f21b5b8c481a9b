// The persisted state of one alarm (one point and measure): what the daemon stores after each
// change and restores at start, so a restart neither raises an alarm again nor forgets one. It
// keeps the latch and its acknowledgement, the on-delay history and the off-delay count, so an
// alarm that was two intervals short of raising is still two intervals short after a restart. Plain
// fields only; states travel as text through ToString / ParseAlarmState. storage/ maps this onto
// its own record type. Thread-safety: a plain value.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "spinward/daemon/alarm_state.h"

namespace spinward::daemon {

struct AlarmAck {
  std::string by;                          // who acknowledged
  std::string note;                        // free text, may be empty
  std::int64_t time_ns = 0;                // UTC ns, as passed in by the caller
  AlarmState level = AlarmState::kNormal;  // the alarm level acknowledged (alert or danger)
};

struct AlarmSnapshot {
  std::string point_id;
  std::string measure;
  AlarmState state =
      AlarmState::kNormal;          // as shown to operators; must agree with the fields below
  std::int64_t state_since_ns = 0;  // time of the last transition (0: none yet)

  AlarmState condition = AlarmState::kNormal;  // level the values hold: normal, alert or danger
  AlarmState latched = AlarmState::kNormal;    // level held by the latch until acknowledged
  bool acknowledged = false;                   // the current alarm has been acknowledged
  std::optional<AlarmAck> last_ack;

  // One character per interval, oldest first: '0' within limits, '1' at alert, '2' at danger.
  std::string on_delay_history;
  int below_reset_count = 0;  // consecutive intervals past the reset level so far

  bool sensor_fault = false;
  std::string sensor_fault_reason;
  bool stale = false;
  bool learning = false;
  std::optional<std::int64_t> last_data_ns;    // end of the last interval seen
  std::optional<std::int64_t> watch_since_ns;  // first stale check, while no data has come yet
};

}  // namespace spinward::daemon
