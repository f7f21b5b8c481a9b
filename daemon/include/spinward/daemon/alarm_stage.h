// The stage after the channel pipelines: judges each measurement record and hands it to trend
// storage together with what it caused.
//
// For each record: the sensor checks (flatline, clipping, bias, dropouts) flag it or not; the alarm
// engine evaluates every configured limit of the point (a sensor fault raises a sensor-fault state
// and no machine alarm); then the record, the alarm events and the changed alarm states go to
// storage as ONE batch, so they are committed in one transaction or not at all. Each event carries
// a unique id and the JSON payload that messaging will publish from the outbox.
// On start the engine is restored from the stored states, so a restart neither raises an alarm
// again nor forgets a latched one. Acknowledgements and stale checks enter the same way.
// Thread-safety: Consume may be called from several workers at once; one mutex guards the engine.
#pragma once

#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <mutex>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/daemon/alarm_engine.h"
#include "spinward/daemon/record_sink.h"
#include "spinward/daemon/sensor_health.h"
#include "spinward/storage/alarm_records.h"
#include "spinward/storage/trend_store.h"

namespace spinward::daemon {

// The seam between this stage and the storage writer, so tests can watch the batches.
class BatchSubmitter {
 public:
  virtual ~BatchSubmitter() = default;
  // False when the writer could not take the batch (it counts what it drops).
  virtual bool Submit(storage::WriteBatch batch) = 0;
};

struct PointJudgement {
  std::string point_id;
  SensorHealthOptions sensor;
  std::vector<AlarmRule> rules;
};

// Names of the overall indicators as alarm measures (also the names trend storage uses).
inline constexpr const char* kMeasureOverallRms = "overall_rms";
inline constexpr const char* kMeasureOverallPeak = "overall_peak";
inline constexpr const char* kMeasureOverallPeakToPeak = "overall_peak_to_peak";
inline constexpr const char* kMeasureOverallCrestFactor = "overall_crest_factor";
inline constexpr const char* kMeasureOverallKurtosis = "overall_kurtosis";
inline constexpr const char* kMeasureOverallMean = "overall_mean";

// The values of a record by measure name: its bands (by band name) and its overall indicators.
MeasureValues ValuesOf(const storage::MeasurementRecord& record);

class AlarmStage final : public RecordSink {
 public:
  using TransitionListener =
      std::function<void(const AlarmTransition&, const std::string& event_id)>;

  // `restored`: the states trend storage holds from the last run.
  static Result<std::unique_ptr<AlarmStage>> Create(
      const std::vector<PointJudgement>& points,
      const std::vector<storage::AlarmStateRecord>& restored, BatchSubmitter& out,
      TransitionListener on_transition = {});

  void Consume(const storage::MeasurementRecord& record) override;
  // A reloaded configuration: the new rules replace the old; an alarm whose point and measure are
  // still configured keeps its state (latch, acknowledgement, on-delay history) under the new
  // limits. Fails, changing nothing, when a rule or sensor check is invalid.
  Status Reconfigure(const std::vector<PointJudgement>& points);
  // Raises "stale" for points with no data for longer than their rules allow.
  void CheckStale(std::int64_t now_ns);
  // An operator's acknowledgement (measure empty: every measure of the point).
  Status Acknowledge(const std::string& point_id, const std::string& measure, const std::string& by,
                     const std::string& note, std::int64_t time_ns);
  Result<AlarmState> State(const std::string& point_id, const std::string& measure) const;

  std::uint64_t submit_failures() const { return submit_failures_; }

 private:
  AlarmStage(BatchSubmitter& out, TransitionListener on_transition);
  // Turns transitions into events and adds every changed state of `point_id` ("" = all) to batch.
  void AddOutcome(const std::vector<AlarmTransition>& transitions, storage::WriteBatch& batch,
                  std::int64_t now_ns, std::string_view point_id = {});
  void SubmitLocked(storage::WriteBatch batch);
  void NoteUntouchedStatesLocked();

  mutable std::mutex mutex_;
  AlarmEngine engine_;
  std::map<std::string, SensorHealthOptions> sensor_options_;
  std::map<std::string, std::string> units_;               // "point/measure" -> unit, for payloads
  std::map<std::string, std::string> last_written_state_;  // "point/measure" -> snapshot text
  std::map<std::string, std::string> last_event_id_;       // "point/measure" -> event id
  std::map<std::string, double> last_value_;               // "point/measure" -> value
  BatchSubmitter& out_;
  TransitionListener on_transition_;
  std::string id_prefix_;
  std::uint64_t next_event_ = 1;
  std::uint64_t submit_failures_ = 0;
};

}  // namespace spinward::daemon
