// The trend database: one SQLite file holding points, measures, per-interval trend values, hourly
// and daily roll-ups, spectrum snapshots, alarm events and states, acknowledgements and an outbox.
// Opening checks the file (not a database, failed quick_check, or a newer schema are refused with
// the file and reason named; the file is never rewritten) and migrates older schemas
// (docs/storage.md). A TrendStore owns one connection and is move-only. Writes happen in one
// transaction per WriteBatch; readers that run while the daemon writes open their own store
// (OpenReadOnly), which WAL mode lets read without waiting for the writer.
// Thread-safety: one thread at a time per store; use one store per thread.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/result.h"
#include "spinward/storage/alarm_records.h"
#include "spinward/storage/measurement_record.h"
#include "spinward/storage/spectrum_blob.h"

namespace spinward::storage {

// The schema version this build writes (PRAGMA user_version).
inline constexpr int kSchemaVersion = 4;
// trend_values.flags bits.
inline constexpr std::int64_t kFlagSensorFault = 1;

enum class TrendLevel { kRaw, kHourly, kDaily };
Result<TrendLevel> ParseTrendLevel(std::string_view text);  // "raw", "hourly", "daily"
std::string_view ToString(TrendLevel level);

// How long each level is kept; 0 days means forever.
struct RetentionPolicy {
  int raw_days = 90;
  int hourly_days = 3 * 365;
  int daily_days = 0;
  int spectrum_days = 90;
  int prune_batch_rows = 500;  // rows per delete; small, so the write lock is held briefly

  Status Validate() const;
};

struct StoreOptions {
  int busy_timeout_ms = 5000;
  // FULL: each commit syncs the WAL, so a committed batch survives power loss (docs/storage.md).
  bool synchronous_full = true;
  bool quick_check_on_open = true;
  // At most one spectrum snapshot per point per this many ns (0: every record that has one).
  std::int64_t spectrum_spacing_ns = 3600LL * 1000000000LL;
  BlobPrecision spectrum_precision = BlobPrecision::kFloat32;
  RetentionPolicy retention;

  Status Validate() const;
};

// What one transaction writes: measurement records and the alarm events and states they caused.
struct WriteBatch {
  std::vector<MeasurementRecord> records;
  std::vector<AlarmEventRecord> events;
  std::vector<AlarmStateRecord> states;
  bool empty() const { return records.empty() && events.empty() && states.empty(); }
};

struct WriteOutcome {
  Status status;
  bool retryable = false;             // disk full, I/O error, busy/locked: nothing was written
  std::size_t intervals_written = 0;  // trend rows inserted (repeats of a stored interval skipped)
  std::size_t events_written = 0;
  std::vector<std::string> warnings;  // values skipped (non-finite, unit changed), one line each
};

// One row of a trend: a raw interval (min = max = mean = value, count 1) or a roll-up bucket.
struct TrendRow {
  std::int64_t start_ns = 0;
  std::int64_t end_ns = 0;
  double value = 0.0;  // raw value, or the bucket's mean
  double min = 0.0;
  double max = 0.0;
  std::int64_t count = 0;        // intervals in the bucket (sensor-fault intervals excluded)
  std::int64_t fault_count = 0;  // sensor-fault intervals (raw: 1 when flagged)
};

struct TrendQuery {
  std::string point_id;
  std::string measure;
  std::int64_t since_ns = INT64_MIN;  // interval start >= since
  std::int64_t until_ns = INT64_MAX;  // interval start < until
  TrendLevel level = TrendLevel::kRaw;
};

struct MeasureStatus {
  std::string point_id;
  std::string measure;
  std::string unit;
  std::optional<double> latest_value;
  std::int64_t latest_start_ns = 0;
  bool latest_sensor_fault = false;
  std::optional<AlarmStateRecord> alarm;
};

struct StoredSpectrum {
  std::string point_id;
  std::int64_t start_ns = 0;
  std::int64_t end_ns = 0;
  SpectrumSnapshot snapshot;
};

// One alarm event waiting in (or sent from) the outbox. `seq` increases in commit order.
struct OutboxEntry {
  std::int64_t seq = 0;
  std::string event_id;
  std::string point_id;
  std::string payload;
  bool sent = false;
};

struct PruneReport {
  std::int64_t raw_rows = 0;
  std::int64_t hourly_rows = 0;
  std::int64_t daily_rows = 0;
  std::int64_t spectrum_rows = 0;
  std::int64_t total() const { return raw_rows + hourly_rows + daily_rows + spectrum_rows; }
};

class TrendStore {
 public:
  // Opens or creates the file read-write and migrates it to kSchemaVersion.
  static Result<TrendStore> Open(const std::string& path, const StoreOptions& options = {});
  // Opens an existing file for queries only; refuses a missing file or one needing migration.
  static Result<TrendStore> OpenReadOnly(const std::string& path, const StoreOptions& options = {});

  TrendStore(TrendStore&&) noexcept;
  TrendStore& operator=(TrendStore&&) noexcept;
  TrendStore(const TrendStore&) = delete;
  TrendStore& operator=(const TrendStore&) = delete;
  ~TrendStore();

  const std::string& path() const;
  Result<int> SchemaVersion();

  // One transaction: all of the batch or none of it.
  WriteOutcome Write(const WriteBatch& batch);

  // Deletes at most retention.prune_batch_rows rows past retention from each level, each table in
  // its own short transaction. Call until total() is 0.
  Result<PruneReport> PruneStep(std::int64_t now_ns);

  // Records an acknowledgement and marks the point's non-normal or latched states (one measure,
  // or all when measure is empty) as acknowledged; a latched state already back to "normal" is
  // released. Returns the number of states acknowledged; fails when there was none.
  Result<int> Acknowledge(const std::string& point_id, const std::string& measure,
                          const std::string& by, const std::string& note, std::int64_t time_ns);

  // Caps the file at `pages` pages (PRAGMA max_page_count): a size bound for small disks, and the
  // deterministic "disk full" that fault tests use. Returns the cap in force.
  Result<std::int64_t> SetMaxPageCount(std::int64_t pages);

  // Queries.
  Result<std::vector<TrendRow>> Trend(const TrendQuery& query);
  // Events since `since_ns`, oldest first. open_only: only the latest event of each point/measure
  // whose state is not "normal" or is still latched.
  Result<std::vector<AlarmEventRecord>> Alarms(std::int64_t since_ns, bool open_only);
  // Latest value and alarm state of every measure of every point, ordered by point and measure.
  Result<std::vector<MeasureStatus>> CurrentStatus();
  Result<std::optional<StoredSpectrum>> LatestSpectrum(const std::string& point_id);
  Result<std::vector<AlarmStateRecord>> LoadAlarmStates();
  // Acknowledgements with ack_id > after_id, oldest first (the daemon polls this for CLI acks).
  Result<std::vector<AcknowledgementRecord>> AcknowledgementsAfter(std::int64_t after_id);
  // The outbox's pending payloads (oldest first), for the messaging component.
  Result<std::vector<std::pair<std::string, std::string>>> PendingOutbox(int limit);
  // Outbox entries with seq > after_seq, oldest first; pending_only: those not yet marked sent.
  Result<std::vector<OutboxEntry>> OutboxAfter(std::int64_t after_seq, bool pending_only,
                                               int limit);
  // The highest seq in the outbox (0 when empty).
  Result<std::int64_t> LastOutboxSeq();
  // Marks an event delivered (the broker acknowledged it). Fails when the event is not in the
  // outbox; marking it again keeps the first time.
  Status MarkOutboxSent(const std::string& event_id, std::int64_t sent_ns);
  // Deletes up to `max_rows` outbox rows marked sent before `sent_before_ns`, oldest first, and
  // returns how many went. Unsent rows are never deleted, nor the newest row (so a seq is never
  // handed out twice: SQLite gives a new row the highest rowid plus one). The alarm_events rows
  // stay.
  Result<int> PruneSentOutbox(std::int64_t sent_before_ns, int max_rows);
  // EXPLAIN QUERY PLAN of the statement Trend() runs for `level`, one detail line per row.
  Result<std::vector<std::string>> ExplainTrendQuery(TrendLevel level);

 private:
  struct Impl;
  explicit TrendStore(std::unique_ptr<Impl> impl);
  static Result<std::unique_ptr<Impl>> OpenChecked(const std::string& path,
                                                   const StoreOptions& options, bool read_only);
  std::unique_ptr<Impl> impl_;
};

// Measure names under which a record's time-domain indicators are stored (bands use their own
// names). Unit "1" marks a dimensionless ratio.
struct IndicatorMeasure {
  std::string_view name;
  bool dimensionless;
};
inline constexpr IndicatorMeasure kIndicatorMeasures[] = {
    {"overall_rms", false},         {"overall_peak", false},    {"overall_peak_to_peak", false},
    {"overall_crest_factor", true}, {"overall_kurtosis", true}, {"overall_mean", false},
};

}  // namespace spinward::storage
