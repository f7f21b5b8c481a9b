#include "spinward/daemon/alarm_stage.h"

#include <chrono>
#include <cmath>
#include <limits>
#include <random>

#include "alarm_snapshot_text.h"
#include "spinward/daemon/json_lines_sink.h"

namespace spinward::daemon {
namespace {

std::string Key(const std::string& point, const std::string& measure) {
  return point + "/" + measure;
}

std::string JsonString(const std::string& text) {
  std::string out;
  AppendJsonString(out, text);
  return out;
}

std::string JsonNumber(std::optional<double> value) {
  std::string out;
  AppendJsonNumber(out, value.value_or(std::numeric_limits<double>::quiet_NaN()));
  return out;
}

}  // namespace

MeasureValues ValuesOf(const storage::MeasurementRecord& record) {
  MeasureValues values;
  for (const auto& band : record.bands) values[band.name] = band.rms;
  const auto& i = record.indicators;
  values[kMeasureOverallRms] = i.rms;
  values[kMeasureOverallPeak] = i.peak;
  values[kMeasureOverallPeakToPeak] = i.peak_to_peak;
  values[kMeasureOverallCrestFactor] = i.crest_factor;
  values[kMeasureOverallKurtosis] = i.kurtosis;
  values[kMeasureOverallMean] = i.mean;
  return values;
}

AlarmStage::AlarmStage(BatchSubmitter& out, TransitionListener on_transition)
    : out_(out), on_transition_(std::move(on_transition)) {
  // Event ids must be unique across restarts (consumers drop duplicates by id): a random prefix
  // per run plus a counter.
  std::random_device device;
  std::uint64_t prefix = (static_cast<std::uint64_t>(device()) << 32) ^ device();
  char buffer[24];
  std::snprintf(buffer, sizeof buffer, "%016llx", static_cast<unsigned long long>(prefix));
  id_prefix_ = buffer;
}

Result<std::unique_ptr<AlarmStage>> AlarmStage::Create(
    const std::vector<PointJudgement>& points,
    const std::vector<storage::AlarmStateRecord>& restored, BatchSubmitter& out,
    TransitionListener on_transition) {
  std::unique_ptr<AlarmStage> stage(new AlarmStage(out, std::move(on_transition)));
  for (const auto& point : points) {
    if (Status s = point.sensor.Validate(); !s.ok()) {
      return Error{"point " + point.point_id + ": sensor checks: " + s.message()};
    }
    stage->sensor_options_[point.point_id] = point.sensor;
    for (const auto& rule : point.rules) {
      if (Status s = stage->engine_.AddRule(rule); !s.ok()) {
        return Error{"point " + point.point_id + ": alarm on " + rule.measure + ": " + s.message()};
      }
      stage->units_[Key(rule.point_id, rule.measure)] = rule.unit;
    }
  }
  for (const auto& state : restored) {
    if (state.engine_state.empty()) continue;
    auto snapshot = SnapshotFromText(state.engine_state);
    if (!snapshot.ok()) {
      return Error{"stored alarm state of " + state.point_id + "/" + state.measure + ": " +
                   snapshot.message()};
    }
    // A rule that no longer exists in the configuration leaves its stored state alone.
    if (!stage->engine_.State(snapshot->point_id, snapshot->measure).ok()) continue;
    if (Status s = stage->engine_.Restore(*snapshot); !s.ok()) {
      return Error{"restoring alarm state of " + state.point_id + "/" + state.measure + ": " +
                   s.message()};
    }
    const auto key = Key(state.point_id, state.measure);
    stage->last_written_state_[key] = state.engine_state;
    stage->last_event_id_[key] = state.last_event_id;
    stage->last_value_[key] = state.last_value;
  }
  stage->NoteUntouchedStatesLocked();
  return stage;
}

void AlarmStage::AddOutcome(const std::vector<AlarmTransition>& transitions,
                            storage::WriteBatch& batch, std::int64_t now_ns,
                            std::string_view point_id) {
  for (const auto& t : transitions) {
    storage::AlarmEventRecord event;
    event.event_id = id_prefix_ + "-" + std::to_string(next_event_++);
    event.time_ns = t.time_ns;
    event.point_id = t.point_id;
    event.measure = t.measure;
    event.from_state = std::string(ToString(t.from));
    event.to_state = std::string(ToString(t.to));
    event.value = t.value.value_or(0.0);
    event.limit = t.limit;
    event.message = t.message;
    const auto key = Key(t.point_id, t.measure);
    const auto unit = units_.count(key) ? units_[key] : std::string();
    event.outbox_payload =
        "{\"schema\":1,\"event_id\":" + JsonString(event.event_id) +
        ",\"time\":" + JsonString(FormatUtc(t.time_ns)) + ",\"point\":" + JsonString(t.point_id) +
        ",\"measure\":" + JsonString(t.measure) + ",\"from\":" + JsonString(event.from_state) +
        ",\"to\":" + JsonString(event.to_state) + ",\"value\":" + JsonNumber(t.value) +
        ",\"limit\":" + JsonNumber(t.limit) + ",\"unit\":" + JsonString(unit) +
        ",\"message\":" + JsonString(t.message) + "}";
    last_event_id_[key] = event.event_id;
    if (on_transition_) on_transition_(t, event.event_id);
    batch.events.push_back(std::move(event));
  }
  // Every state whose snapshot changed since it was last written (on-delay counts included). An
  // interval can change only its own point's alarms: looking at every point's would make each
  // record cost in proportion to the site's size.
  for (const auto& snapshot :
       point_id.empty() ? engine_.Snapshots() : engine_.Snapshots(point_id)) {
    const auto key = Key(snapshot.point_id, snapshot.measure);
    std::string text = SnapshotToText(snapshot);
    auto& last = last_written_state_[key];
    if (last == text) continue;
    storage::AlarmStateRecord state;
    state.point_id = snapshot.point_id;
    state.measure = snapshot.measure;
    state.state = std::string(ToString(snapshot.state));
    state.since_ns = snapshot.state_since_ns;
    state.latched = snapshot.latched != AlarmState::kNormal;
    state.last_value = last_value_.count(key) ? last_value_[key] : 0.0;
    state.last_event_id = last_event_id_[key];
    if (snapshot.acknowledged && snapshot.last_ack) {
      state.ack_by = snapshot.last_ack->by;
      state.ack_ns = snapshot.last_ack->time_ns;
      state.ack_note = snapshot.last_ack->note;
    }
    state.updated_ns = now_ns;
    state.engine_state = text;
    last = std::move(text);
    batch.states.push_back(std::move(state));
  }
}

// A rule that has judged nothing yet has no state worth storing: readers show its point as
// unknown until its first interval, whether or not a periodic stale check ran in between.
void AlarmStage::NoteUntouchedStatesLocked() {
  for (const auto& snapshot : engine_.Snapshots()) {
    last_written_state_.try_emplace(Key(snapshot.point_id, snapshot.measure),
                                    SnapshotToText(snapshot));
  }
}

void AlarmStage::SubmitLocked(storage::WriteBatch batch) {
  if (batch.empty()) return;
  if (!out_.Submit(std::move(batch))) ++submit_failures_;
}

void AlarmStage::Consume(const storage::MeasurementRecord& incoming) {
  storage::MeasurementRecord record = incoming;
  std::lock_guard lock(mutex_);
  SensorCounters counters;
  counters.clipped_samples = record.clipped_samples;
  counters.longest_identical_run = record.longest_identical_run;
  counters.sequence_gaps = record.sequence_gaps;
  SensorHealthVerdict verdict;
  if (auto it = sensor_options_.find(record.point_id); it != sensor_options_.end()) {
    verdict = CheckSensorHealth(it->second, record.indicators, counters);
    FlagRecord(verdict, record);
  }
  const auto values = ValuesOf(record);
  for (const auto& [measure, value] : values) last_value_[Key(record.point_id, measure)] = value;
  storage::WriteBatch batch;
  auto transitions = engine_.Evaluate(record.point_id, record.interval_end_ns, values, verdict);
  if (transitions.ok()) {
    AddOutcome(*transitions, batch, record.interval_end_ns, record.point_id);
  }
  batch.records.push_back(std::move(record));
  SubmitLocked(std::move(batch));
}

Status AlarmStage::Reconfigure(const std::vector<PointJudgement>& points) {
  AlarmEngine next;
  std::map<std::string, SensorHealthOptions> sensor_options;
  std::map<std::string, std::string> units;
  for (const auto& point : points) {
    if (Status s = point.sensor.Validate(); !s.ok()) {
      return Status::Fail("point " + point.point_id + ": sensor checks: " + s.message());
    }
    sensor_options[point.point_id] = point.sensor;
    for (const auto& rule : point.rules) {
      if (Status s = next.AddRule(rule); !s.ok()) {
        return Status::Fail("point " + point.point_id + ": alarm on " + rule.measure + ": " +
                            s.message());
      }
      units[Key(rule.point_id, rule.measure)] = rule.unit;
    }
  }
  std::lock_guard lock(mutex_);
  for (const auto& snapshot : engine_.Snapshots()) {
    if (!next.State(snapshot.point_id, snapshot.measure).ok()) continue;  // rule removed
    next.Restore(snapshot).IgnoreError();  // a snapshot the new rule cannot take starts afresh
  }
  engine_ = std::move(next);
  sensor_options_ = std::move(sensor_options);
  units_ = std::move(units);
  NoteUntouchedStatesLocked();
  return Status::Ok();
}

void AlarmStage::CheckStale(std::int64_t now_ns) {
  std::lock_guard lock(mutex_);
  storage::WriteBatch batch;
  AddOutcome(engine_.CheckStale(now_ns), batch, now_ns);
  SubmitLocked(std::move(batch));
}

Status AlarmStage::Acknowledge(const std::string& point_id, const std::string& measure,
                               const std::string& by, const std::string& note,
                               std::int64_t time_ns) {
  std::lock_guard lock(mutex_);
  std::vector<AlarmTransition> transitions;
  std::vector<std::string> measures;
  // An acknowledgement never reaches an alarm raised after it was given (matters when stored
  // acknowledgements are applied again after a restart).
  for (const auto& snapshot : engine_.Snapshots()) {
    if (snapshot.point_id != point_id || (!measure.empty() && snapshot.measure != measure))
      continue;
    if (snapshot.state_since_ns > time_ns) continue;
    measures.push_back(snapshot.measure);
  }
  if (measures.empty()) {
    return Status::Fail("point " + point_id + (measure.empty() ? "" : " measure " + measure) +
                        ": no alarm to acknowledge");
  }
  for (const auto& m : measures) {
    auto result = engine_.Ack(point_id, m, by, note, time_ns);
    if (result.ok() && *result) transitions.push_back(**result);
  }
  storage::WriteBatch batch;
  AddOutcome(transitions, batch, time_ns);
  SubmitLocked(std::move(batch));
  return Status::Ok();
}

Result<AlarmState> AlarmStage::State(const std::string& point_id,
                                     const std::string& measure) const {
  std::lock_guard lock(mutex_);
  return engine_.State(point_id, measure);
}

}  // namespace spinward::daemon
