// The state machine of one alarm (one point and measure) under its AlarmRule. It is fed one value
// per interval (or a sensor fault), stale checks and acknowledgements, and returns the transition,
// if any, that the input caused. It reads no clock: every time is passed in by the caller.
//
// The machine keeps a condition level (normal, alert, danger) that the values hold:
// - it rises to a level when at least N of the last M intervals reached that level's setpoint;
// - it falls when the value has stayed past the level's reset level (setpoint less deadband) for
//   the off-delay; falling also trims the on-delay history, so a new rise needs N fresh intervals.
// A latching rule shows the highest level raised until it is acknowledged; an acknowledgement
// releases the latch down to the level the values still hold. Sensor faults and staleness suspend
// judgement: they reset the condition and on-delay history (values from a faulty sensor prove
// nothing) but keep an unacknowledged latch. Learning raises no machine alarm at all.
// Shown state, by precedence: stale, sensor_fault, learning, then the machine level.
// Thread-safety: none; one owner (the alarm engine).
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "spinward/daemon/alarm_rule.h"
#include "spinward/daemon/alarm_snapshot.h"
#include "spinward/daemon/alarm_state.h"
#include "spinward/daemon/alarm_transition.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

class AlarmStateMachine {
 public:
  // `rule` must have passed Validate().
  explicit AlarmStateMachine(AlarmRule rule);

  const AlarmRule& rule() const { return rule_; }
  AlarmState state() const { return state_; }
  std::optional<std::int64_t> last_data_ns() const { return last_data_ns_; }

  // A healthy value for the interval ending at `time_ns`.
  std::optional<AlarmTransition> OnValue(std::int64_t time_ns, double value);
  // The interval's sensor checks failed (or its value is unusable): no machine judgement.
  std::optional<AlarmTransition> OnSensorFault(std::int64_t time_ns, const std::string& reason,
                                               std::optional<double> value);
  // Marks the alarm stale when no interval came for the rule's stale_after_ns. Before any data,
  // the first call starts the wait.
  std::optional<AlarmTransition> CheckStale(std::int64_t now_ns);
  // While learning, values are taken but raise nothing.
  std::optional<AlarmTransition> SetLearning(bool learning, std::int64_t time_ns);
  // Acknowledges the active or latched alarm; fails when there is none or it is already
  // acknowledged.
  Result<std::optional<AlarmTransition>> Acknowledge(const std::string& by, const std::string& note,
                                                     std::int64_t time_ns);

  AlarmSnapshot Snapshot() const;
  // Takes over a stored snapshot without emitting transitions. Fails, changing nothing, when the
  // snapshot is for another alarm or its fields disagree.
  Status Restore(const AlarmSnapshot& snapshot);

 private:
  enum Side { kHigh, kLow };

  int RawLevel(double value) const;
  int HoldLevel(double value) const;
  int OnDelayLevel() const;
  int CountAtLeast(int level) const;
  int MachineLevel() const;
  AlarmState Shown() const;
  Side SideOf(double value) const;
  std::optional<double> Setpoint(int level, Side side) const;
  void SuspendJudgement();
  void SettleAck();
  std::optional<AlarmTransition> Emit(std::int64_t time_ns, AlarmState before,
                                      std::optional<double> value, std::optional<double> limit,
                                      const std::string& reason);

  AlarmRule rule_;
  AlarmState state_ = AlarmState::kNormal;
  std::int64_t state_since_ns_ = 0;
  int condition_ = 0;  // 0 normal, 1 alert, 2 danger
  int latched_ = 0;
  bool acknowledged_ = false;
  std::optional<AlarmAck> last_ack_;
  std::string history_;  // '0'..'2' per interval, oldest first, at most on_delay_m long
  int below_reset_count_ = 0;
  bool sensor_fault_ = false;
  std::string sensor_fault_reason_;
  bool stale_ = false;
  bool learning_ = false;
  std::optional<std::int64_t> last_data_ns_;
  std::optional<std::int64_t> watch_since_ns_;
};

}  // namespace spinward::daemon
