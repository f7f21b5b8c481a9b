// The alarm engine: one AlarmStateMachine per (point, measure) rule. The pipeline hands it each
// interval's values and the sensor checks' verdict and gets back the transitions to store and
// publish; a timer asks it for stale points; operators acknowledge through it.
// AlarmEvaluator is the seam the pipeline depends on, so pipeline tests can use a fake.
// A failed sensor check turns every measure of the point into sensor_fault and raises no machine
// alarm; a value that is not finite does the same for its own measure.
// The engine reads no clock and does no I/O: times come in as UTC ns, persistence goes out as
// AlarmSnapshot values. Transitions come out ordered by measure name within a point.
// Thread-safety: none; one owner (the alarm stage of the daemon).
#pragma once

#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/daemon/alarm_rule.h"
#include "spinward/daemon/alarm_snapshot.h"
#include "spinward/daemon/alarm_state.h"
#include "spinward/daemon/alarm_state_machine.h"
#include "spinward/daemon/alarm_transition.h"
#include "spinward/daemon/sensor_health.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

// Measure name -> value for one interval of one point (band values and indicators).
using MeasureValues = std::map<std::string, double, std::less<>>;

class AlarmEvaluator {
 public:
  virtual ~AlarmEvaluator() = default;

  // Judges one interval of one point. Fails, changing nothing, when `interval_end_ns` is not after
  // the last interval judged for a measure it would update.
  virtual Result<std::vector<AlarmTransition>> Evaluate(std::string_view point_id,
                                                        std::int64_t interval_end_ns,
                                                        const MeasureValues& values,
                                                        const SensorHealthVerdict& health) = 0;
  // Alarms whose points sent nothing for their rule's stale time.
  virtual std::vector<AlarmTransition> CheckStale(std::int64_t now_ns) = 0;
};

class AlarmEngine final : public AlarmEvaluator {
 public:
  // Validates the rule; a second rule for the same point and measure is an error.
  Status AddRule(const AlarmRule& rule);

  Result<std::vector<AlarmTransition>> Evaluate(std::string_view point_id,
                                                std::int64_t interval_end_ns,
                                                const MeasureValues& values,
                                                const SensorHealthVerdict& health) override;
  std::vector<AlarmTransition> CheckStale(std::int64_t now_ns) override;

  // Records who acknowledged and when; returns the transition when that releases a latch.
  Result<std::optional<AlarmTransition>> Ack(std::string_view point_id, std::string_view measure,
                                             const std::string& who, const std::string& note,
                                             std::int64_t time_ns);
  // Puts every measure of a point into (or out of) baseline learning.
  Result<std::vector<AlarmTransition>> SetLearning(std::string_view point_id, bool learning,
                                                   std::int64_t time_ns);

  Result<AlarmState> State(std::string_view point_id, std::string_view measure) const;
  std::vector<AlarmSnapshot> Snapshots() const;
  // The snapshots of one point's alarms only (an interval of a point changes no other point's).
  std::vector<AlarmSnapshot> Snapshots(std::string_view point_id) const;
  // Restores one alarm from storage without emitting transitions; its rule must be added first.
  Status Restore(const AlarmSnapshot& snapshot);

 private:
  using Measures = std::map<std::string, AlarmStateMachine, std::less<>>;

  AlarmStateMachine* Find(std::string_view point_id, std::string_view measure);
  const AlarmStateMachine* Find(std::string_view point_id, std::string_view measure) const;

  std::map<std::string, Measures, std::less<>> points_;
};

}  // namespace spinward::daemon
