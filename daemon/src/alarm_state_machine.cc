#include "spinward/daemon/alarm_state_machine.h"

#include <algorithm>
#include <cstdio>
#include <string>
#include <utility>

namespace spinward::daemon {
namespace {

constexpr const char* kMachineAdvisory =
    " Advisory: confirm on site against the maintenance rules before acting on this.";
constexpr const char* kSensorAdvisory =
    " Advisory: a faulty sensor can hide a real machine problem; check the sensor and its cabling "
    "under site procedures.";
constexpr const char* kStaleAdvisory =
    " Advisory: this point is not watching the machine now; check the acquisition chain under "
    "site procedures.";
constexpr const char* kLearningAdvisory =
    " Advisory: no machine alarm is raised for this point while it learns; site rounds still "
    "apply.";

std::string Num(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.4g", value);
  return buffer;
}

AlarmState LevelState(int level) {
  return level >= 2 ? AlarmState::kDanger : level == 1 ? AlarmState::kAlert : AlarmState::kNormal;
}

// -1 for a state that is not a machine level.
int StateLevel(AlarmState state) {
  switch (state) {
    case AlarmState::kNormal:
      return 0;
    case AlarmState::kAlert:
      return 1;
    case AlarmState::kDanger:
      return 2;
    default:
      return -1;
  }
}

std::string Seconds(std::int64_t ns) { return Num(static_cast<double>(ns) * 1e-9) + " s"; }

}  // namespace

AlarmStateMachine::AlarmStateMachine(AlarmRule rule) : rule_(std::move(rule)) {}

int AlarmStateMachine::RawLevel(double value) const {
  int level = value >= rule_.high_danger ? 2 : value >= rule_.high_alert ? 1 : 0;
  if (rule_.low_danger && value <= *rule_.low_danger) level = 2;
  if (rule_.low_alert && value <= *rule_.low_alert) level = std::max(level, 1);
  return level;
}

// The highest level the value still holds once raised: it has not yet passed the reset level.
int AlarmStateMachine::HoldLevel(double value) const {
  auto high_holds = [&](double setpoint) {
    return value >= setpoint - rule_.DeadbandFor(setpoint);
  };
  auto low_holds = [&](const std::optional<double>& setpoint) {
    return setpoint && value <= *setpoint + rule_.DeadbandFor(*setpoint);
  };
  if (high_holds(rule_.high_danger) || low_holds(rule_.low_danger)) return 2;
  if (high_holds(rule_.high_alert) || low_holds(rule_.low_alert)) return 1;
  return 0;
}

int AlarmStateMachine::CountAtLeast(int level) const {
  return static_cast<int>(std::count_if(history_.begin(), history_.end(),
                                        [level](char c) { return c - '0' >= level; }));
}

int AlarmStateMachine::OnDelayLevel() const {
  for (int level = 2; level >= 1; --level) {
    if (CountAtLeast(level) >= rule_.on_delay_n) return level;
  }
  return 0;
}

int AlarmStateMachine::MachineLevel() const { return std::max(condition_, latched_); }

AlarmState AlarmStateMachine::Shown() const {
  if (stale_) return AlarmState::kStale;
  if (sensor_fault_) return AlarmState::kSensorFault;
  if (learning_) return AlarmState::kLearning;
  return LevelState(MachineLevel());
}

// High unless the rule has low limits and the value sits nearer to them.
AlarmStateMachine::Side AlarmStateMachine::SideOf(double value) const {
  std::optional<double> low = rule_.low_alert ? rule_.low_alert : rule_.low_danger;
  if (!low) return kHigh;
  return value > (*low + rule_.high_alert) / 2.0 ? kHigh : kLow;
}

std::optional<double> AlarmStateMachine::Setpoint(int level, Side side) const {
  if (side == kHigh) return level >= 2 ? rule_.high_danger : rule_.high_alert;
  if (level >= 2) return rule_.low_danger ? rule_.low_danger : rule_.low_alert;
  return rule_.low_alert ? rule_.low_alert : rule_.low_danger;
}

void AlarmStateMachine::SuspendJudgement() {
  condition_ = 0;
  history_.clear();
  below_reset_count_ = 0;
  SettleAck();
}

// An acknowledged alarm latches nothing more than the values still hold, and once nothing is
// active there is nothing acknowledged.
void AlarmStateMachine::SettleAck() {
  if (acknowledged_) latched_ = std::min(latched_, condition_);
  if (MachineLevel() == 0) acknowledged_ = false;
}

std::optional<AlarmTransition> AlarmStateMachine::Emit(std::int64_t time_ns, AlarmState before,
                                                       std::optional<double> value,
                                                       std::optional<double> limit,
                                                       const std::string& reason) {
  state_ = Shown();
  if (state_ == before) return std::nullopt;
  state_since_ns_ = time_ns;
  AlarmTransition transition;
  transition.time_ns = time_ns;
  transition.point_id = rule_.point_id;
  transition.measure = rule_.measure;
  transition.from = before;
  transition.to = state_;
  transition.value = value;
  transition.limit = limit;
  transition.message = rule_.point_id + " " + rule_.measure + " " + std::string(ToString(before)) +
                       " -> " + std::string(ToString(state_)) + ": " + reason + ".";
  switch (state_) {
    case AlarmState::kSensorFault:
      transition.message += kSensorAdvisory;
      break;
    case AlarmState::kStale:
      transition.message += kStaleAdvisory;
      break;
    case AlarmState::kLearning:
      transition.message += kLearningAdvisory;
      break;
    default:
      transition.message += kMachineAdvisory;
      break;
  }
  return transition;
}

std::optional<AlarmTransition> AlarmStateMachine::OnValue(std::int64_t time_ns, double value) {
  const AlarmState before = state_;
  const bool was_suspended = stale_ || sensor_fault_;
  last_data_ns_ = time_ns;
  stale_ = false;
  sensor_fault_ = false;
  sensor_fault_reason_.clear();
  const std::string unit = rule_.unit.empty() ? "" : " " + rule_.unit;
  std::string reason;
  std::optional<double> limit;

  if (!learning_) {
    history_.push_back(static_cast<char>('0' + RawLevel(value)));
    if (history_.size() > static_cast<std::size_t>(rule_.on_delay_m)) history_.erase(0, 1);
    const int on_level = OnDelayLevel();
    const int hold_level = HoldLevel(value);
    if (on_level > condition_) {
      condition_ = on_level;
      below_reset_count_ = 0;
      acknowledged_ = false;  // a higher level is a new alarm
      if (rule_.latching) latched_ = std::max(latched_, on_level);
      const Side side = RawLevel(value) > 0 ? SideOf(value) : kHigh;
      limit = Setpoint(on_level, side);
      reason = Num(value) + unit + " is at or " + (side == kHigh ? "above" : "below") + " the " +
               (side == kHigh ? "high " : "low ") + std::string(ToString(LevelState(on_level))) +
               " limit " + Num(*limit) + unit + " in " + std::to_string(CountAtLeast(on_level)) +
               " of the last " + std::to_string(history_.size()) + " interval(s)";
    } else if (hold_level < condition_) {
      if (++below_reset_count_ >= rule_.off_delay_intervals) {
        const int left = hold_level + 1;  // the lowest level the value left
        const Side side = SideOf(value);
        const double setpoint = *Setpoint(left, side);
        const double reset = side == kHigh ? setpoint - rule_.DeadbandFor(setpoint)
                                           : setpoint + rule_.DeadbandFor(setpoint);
        limit = reset;
        reason = Num(value) + unit + " has been " + (side == kHigh ? "below" : "above") +
                 " the reset level " + Num(reset) + unit + " (" +
                 (side == kHigh ? "high " : "low ") + std::string(ToString(LevelState(left))) +
                 " limit " + Num(setpoint) + unit + " less deadband) for " +
                 std::to_string(below_reset_count_) + " interval(s)";
        condition_ = hold_level;
        below_reset_count_ = 0;
        // A new rise must be earned by fresh intervals, not by those before the fall.
        for (char& c : history_) c = std::min(c, static_cast<char>('0' + hold_level));
        if (latched_ > condition_ && !acknowledged_) {
          reason += "; the latched " + std::string(ToString(LevelState(latched_))) +
                    " alarm stays until acknowledged";
        }
      }
    } else {
      below_reset_count_ = 0;
    }
    SettleAck();
  }

  if (reason.empty()) {
    // The shown state changed only because a suspension (stale, sensor fault) ended.
    reason = std::string(was_suspended ? "data and sensor checks are good again" : "new value") +
             ", value " + Num(value) + unit;
    if (learning_) reason += "; still learning its baseline";
    if (!learning_ && latched_ > condition_) {
      reason += "; the latched " + std::string(ToString(LevelState(latched_))) +
                " alarm stays until acknowledged";
    }
  }
  return Emit(time_ns, before, value, limit, reason);
}

std::optional<AlarmTransition> AlarmStateMachine::OnSensorFault(std::int64_t time_ns,
                                                                const std::string& reason,
                                                                std::optional<double> value) {
  const AlarmState before = state_;
  last_data_ns_ = time_ns;
  stale_ = false;
  sensor_fault_ = true;
  sensor_fault_reason_ = reason;
  SuspendJudgement();
  return Emit(time_ns, before, value, std::nullopt,
              reason +
                  "; machine alarms are held off and the values flagged until the sensor "
                  "checks pass");
}

std::optional<AlarmTransition> AlarmStateMachine::CheckStale(std::int64_t now_ns) {
  if (rule_.stale_after_ns <= 0 || stale_) return std::nullopt;
  if (!last_data_ns_ && !watch_since_ns_) {
    watch_since_ns_ = now_ns;
    return std::nullopt;
  }
  const std::int64_t since = last_data_ns_ ? *last_data_ns_ : *watch_since_ns_;
  if (now_ns - since < rule_.stale_after_ns) return std::nullopt;
  const AlarmState before = state_;
  stale_ = true;
  SuspendJudgement();
  return Emit(now_ns, before, std::nullopt, std::nullopt,
              std::string(last_data_ns_ ? "no interval for " : "no interval at all in ") +
                  Seconds(now_ns - since) + " (stale after " + Seconds(rule_.stale_after_ns) +
                  "); the machine state is unknown");
}

std::optional<AlarmTransition> AlarmStateMachine::SetLearning(bool learning, std::int64_t time_ns) {
  if (learning == learning_) return std::nullopt;
  const AlarmState before = state_;
  learning_ = learning;
  if (learning_) SuspendJudgement();
  std::string reason = learning_ ? "the point is learning its baseline; values raise no machine "
                                   "alarm until it ends"
                                 : "baseline learning ended; values are judged against the limits "
                                   "from the next interval";
  if (!learning_ && latched_ > condition_) {
    reason += "; the latched " + std::string(ToString(LevelState(latched_))) +
              " alarm stays until acknowledged";
  }
  return Emit(time_ns, before, std::nullopt, std::nullopt, reason);
}

Result<std::optional<AlarmTransition>> AlarmStateMachine::Acknowledge(const std::string& by,
                                                                      const std::string& note,
                                                                      std::int64_t time_ns) {
  const std::string who = rule_.point_id + " " + rule_.measure;
  if (by.empty()) return Error{"acknowledging " + who + ": who acknowledges is empty"};
  const int level = MachineLevel();
  if (level == 0)
    return Error{"nothing to acknowledge: " + who + " has no active or latched alarm"};
  if (acknowledged_) {
    return Error{"the " + std::string(ToString(LevelState(level))) + " alarm of " + who +
                 " is already acknowledged by " + last_ack_->by + " at " +
                 std::to_string(last_ack_->time_ns) + " ns"};
  }
  const AlarmState before = state_;
  acknowledged_ = true;
  last_ack_ = AlarmAck{by, note, time_ns, LevelState(level)};
  SettleAck();
  Result<std::optional<AlarmTransition>> result =
      Emit(time_ns, before, std::nullopt, std::nullopt,
           "acknowledged by " + by + "; the values no longer hold the latched " +
               std::string(ToString(LevelState(level))) + " level, so the latch is released");
  return result;
}

AlarmSnapshot AlarmStateMachine::Snapshot() const {
  AlarmSnapshot snapshot;
  snapshot.point_id = rule_.point_id;
  snapshot.measure = rule_.measure;
  snapshot.state = state_;
  snapshot.state_since_ns = state_since_ns_;
  snapshot.condition = LevelState(condition_);
  snapshot.latched = LevelState(latched_);
  snapshot.acknowledged = acknowledged_;
  snapshot.last_ack = last_ack_;
  snapshot.on_delay_history = history_;
  snapshot.below_reset_count = below_reset_count_;
  snapshot.sensor_fault = sensor_fault_;
  snapshot.sensor_fault_reason = sensor_fault_reason_;
  snapshot.stale = stale_;
  snapshot.learning = learning_;
  snapshot.last_data_ns = last_data_ns_;
  snapshot.watch_since_ns = watch_since_ns_;
  return snapshot;
}

Status AlarmStateMachine::Restore(const AlarmSnapshot& snapshot) {
  const std::string who = rule_.point_id + " " + rule_.measure;
  if (snapshot.point_id != rule_.point_id || snapshot.measure != rule_.measure) {
    return Status::Fail("snapshot of " + snapshot.point_id + " " + snapshot.measure +
                        " cannot restore the alarm of " + who);
  }
  const int condition = StateLevel(snapshot.condition);
  const int latched = StateLevel(snapshot.latched);
  if (condition < 0) {
    return Status::Fail("snapshot of " + who + ": condition must be normal, alert or danger, got " +
                        std::string(ToString(snapshot.condition)));
  }
  if (latched < 0) {
    return Status::Fail("snapshot of " + who + ": latched must be normal, alert or danger, got " +
                        std::string(ToString(snapshot.latched)));
  }
  for (char c : snapshot.on_delay_history) {
    if (c < '0' || c > '2') {
      return Status::Fail("snapshot of " + who + ": on_delay_history '" +
                          snapshot.on_delay_history + "' has a character other than 0, 1, 2");
    }
  }
  if (snapshot.below_reset_count < 0) {
    return Status::Fail("snapshot of " + who + ": below_reset_count must not be negative, got " +
                        std::to_string(snapshot.below_reset_count));
  }
  if (snapshot.acknowledged && (!snapshot.last_ack || snapshot.last_ack->by.empty())) {
    return Status::Fail("snapshot of " + who + ": acknowledged without a recorded acknowledgement");
  }

  AlarmStateMachine restored(rule_);
  restored.condition_ = condition;
  restored.latched_ = latched;
  restored.acknowledged_ = snapshot.acknowledged;
  restored.last_ack_ = snapshot.last_ack;
  restored.history_ = snapshot.on_delay_history;
  // A rule whose window shrank keeps the newest intervals.
  const auto window = static_cast<std::size_t>(rule_.on_delay_m);
  if (restored.history_.size() > window) {
    restored.history_.erase(0, restored.history_.size() - window);
  }
  restored.below_reset_count_ = snapshot.below_reset_count;
  restored.sensor_fault_ = snapshot.sensor_fault;
  restored.sensor_fault_reason_ = snapshot.sensor_fault_reason;
  restored.stale_ = snapshot.stale;
  restored.learning_ = snapshot.learning;
  restored.last_data_ns_ = snapshot.last_data_ns;
  restored.watch_since_ns_ = snapshot.watch_since_ns;
  restored.state_since_ns_ = snapshot.state_since_ns;
  restored.state_ = restored.Shown();
  if (restored.state_ != snapshot.state) {
    return Status::Fail("snapshot of " + who + ": state '" + std::string(ToString(snapshot.state)) +
                        "' disagrees with its fields, which give '" +
                        std::string(ToString(restored.state_)) + "'");
  }
  *this = std::move(restored);
  return Status::Ok();
}

}  // namespace spinward::daemon
