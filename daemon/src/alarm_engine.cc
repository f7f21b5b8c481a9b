#include "spinward/daemon/alarm_engine.h"

#include <cmath>
#include <cstdio>
#include <string>

namespace spinward::daemon {
namespace {

std::string Name(std::string_view point_id, std::string_view measure) {
  return std::string(point_id) + " " + std::string(measure);
}

}  // namespace

Status AlarmEngine::AddRule(const AlarmRule& rule) {
  if (Status status = rule.Validate(); !status) return status;
  Measures& measures = points_[rule.point_id];
  if (measures.contains(rule.measure)) {
    return Status::Fail("a second alarm rule for " + Name(rule.point_id, rule.measure));
  }
  measures.emplace(rule.measure, AlarmStateMachine(rule));
  return Status::Ok();
}

AlarmStateMachine* AlarmEngine::Find(std::string_view point_id, std::string_view measure) {
  auto point = points_.find(point_id);
  if (point == points_.end()) return nullptr;
  auto machine = point->second.find(measure);
  return machine == point->second.end() ? nullptr : &machine->second;
}

const AlarmStateMachine* AlarmEngine::Find(std::string_view point_id,
                                           std::string_view measure) const {
  return const_cast<AlarmEngine*>(this)->Find(point_id, measure);
}

Result<std::vector<AlarmTransition>> AlarmEngine::Evaluate(std::string_view point_id,
                                                           std::int64_t interval_end_ns,
                                                           const MeasureValues& values,
                                                           const SensorHealthVerdict& health) {
  std::vector<AlarmTransition> transitions;
  auto point = points_.find(point_id);
  if (point == points_.end()) return transitions;  // a point without rules raises nothing

  // Check the order first so that a rejected interval changes nothing.
  for (const auto& [measure, machine] : point->second) {
    const bool touched = !health.ok() || values.contains(measure);
    if (touched && machine.last_data_ns() && interval_end_ns <= *machine.last_data_ns()) {
      return Error{"interval ending at " + std::to_string(interval_end_ns) + " ns for " +
                   Name(point_id, measure) + " is not after the last one judged, at " +
                   std::to_string(*machine.last_data_ns()) + " ns"};
    }
  }

  for (auto& [measure, machine] : point->second) {
    auto value = values.find(measure);
    std::optional<double> present;
    if (value != values.end()) present = value->second;
    std::optional<AlarmTransition> transition;
    if (!health.ok()) {
      transition = machine.OnSensorFault(interval_end_ns, health.Reason(), present);
    } else if (!present) {
      continue;  // not produced this interval; staleness will tell if that lasts
    } else if (!std::isfinite(*present)) {
      char text[32];
      std::snprintf(text, sizeof text, "%g", *present);
      transition = machine.OnSensorFault(
          interval_end_ns, std::string("value is not a finite number (") + text + ")", present);
    } else {
      transition = machine.OnValue(interval_end_ns, *present);
    }
    if (transition) transitions.push_back(std::move(*transition));
  }
  return transitions;
}

std::vector<AlarmTransition> AlarmEngine::CheckStale(std::int64_t now_ns) {
  std::vector<AlarmTransition> transitions;
  for (auto& [point_id, measures] : points_) {
    for (auto& [measure, machine] : measures) {
      if (auto transition = machine.CheckStale(now_ns))
        transitions.push_back(std::move(*transition));
    }
  }
  return transitions;
}

Result<std::optional<AlarmTransition>> AlarmEngine::Ack(std::string_view point_id,
                                                        std::string_view measure,
                                                        const std::string& who,
                                                        const std::string& note,
                                                        std::int64_t time_ns) {
  AlarmStateMachine* machine = Find(point_id, measure);
  if (!machine) return Error{"no alarm rule for " + Name(point_id, measure) + " to acknowledge"};
  return machine->Acknowledge(who, note, time_ns);
}

Result<std::vector<AlarmTransition>> AlarmEngine::SetLearning(std::string_view point_id,
                                                              bool learning, std::int64_t time_ns) {
  auto point = points_.find(point_id);
  if (point == points_.end()) {
    return Error{"no alarm rules for point " + std::string(point_id) + " to set learning on"};
  }
  std::vector<AlarmTransition> transitions;
  for (auto& [measure, machine] : point->second) {
    if (auto transition = machine.SetLearning(learning, time_ns)) {
      transitions.push_back(std::move(*transition));
    }
  }
  return transitions;
}

Result<AlarmState> AlarmEngine::State(std::string_view point_id, std::string_view measure) const {
  const AlarmStateMachine* machine = Find(point_id, measure);
  if (!machine) return Error{"no alarm rule for " + Name(point_id, measure)};
  return machine->state();
}

std::vector<AlarmSnapshot> AlarmEngine::Snapshots() const {
  std::vector<AlarmSnapshot> snapshots;
  for (const auto& [point_id, measures] : points_) {
    for (const auto& [measure, machine] : measures) snapshots.push_back(machine.Snapshot());
  }
  return snapshots;
}

std::vector<AlarmSnapshot> AlarmEngine::Snapshots(std::string_view point_id) const {
  std::vector<AlarmSnapshot> snapshots;
  auto point = points_.find(point_id);
  if (point == points_.end()) return snapshots;
  for (const auto& [measure, machine] : point->second) snapshots.push_back(machine.Snapshot());
  return snapshots;
}

Status AlarmEngine::Restore(const AlarmSnapshot& snapshot) {
  AlarmStateMachine* machine = Find(snapshot.point_id, snapshot.measure);
  if (!machine) {
    return Status::Fail("no alarm rule for " + Name(snapshot.point_id, snapshot.measure) +
                        " to restore a snapshot into");
  }
  return machine->Restore(snapshot);
}

}  // namespace spinward::daemon
