// The read side of the nightly report (`spinward report`): measures, hourly roll-ups over a window,
// each measure's earliest stored hour, alarm events, acknowledgements, alarm states and spectrum
// snapshots, all through the indexes of docs/storage.md so a 500-point, 30-day database reports in
// seconds. Raw trend_values are never scanned: the report works on hourly roll-ups, which hold the
// mean, min, max and interval counts it needs, and reads one hour of raw rows per forecast to
// place the hourly means in time. Opens its own read-only connection, so it runs while
// the daemon writes (WAL).
// Thread-safety: one thread at a time per reader.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "spinward/estimators/result.h"
#include "spinward/storage/alarm_records.h"
#include "spinward/storage/baseline_store.h"
#include "spinward/storage/trend_store.h"

namespace spinward::storage {

struct ReportMeasure {
  std::int64_t measure_pk = 0;
  std::string point_id;
  std::string name;
  std::string kind;  // "band" or "indicator"
  std::string unit;
  std::optional<double> lo_hz, hi_hz;
};

class ReportReader {
 public:
  // Refuses a missing file or one whose schema is not this build's (run the daemon to migrate).
  static Result<ReportReader> Open(const std::string& path);

  ReportReader(ReportReader&&) noexcept;
  ReportReader& operator=(ReportReader&&) noexcept;
  ReportReader(const ReportReader&) = delete;
  ReportReader& operator=(const ReportReader&) = delete;
  ~ReportReader();

  // Every measure of every point, ordered by point and name.
  Result<std::vector<ReportMeasure>> Measures();
  // Hourly buckets of one measure with since <= bucket < until, oldest first (start_ns is the
  // bucket; value the mean, NaN when every interval was a sensor fault).
  Result<std::vector<TrendRow>> Hourly(std::int64_t measure_pk, std::int64_t since_ns,
                                       std::int64_t until_ns);
  // Where in the hour starting at bucket_ns the measure's raw intervals sit: the mean of their
  // midpoints, in ns after bucket_ns (30 min for an evenly filled hour, seconds for a snapshot at
  // the top of the hour); none when the hour holds no interval. One hour of raw rows, by index.
  Result<std::optional<double>> HourCentre(std::int64_t measure_pk, std::int64_t bucket_ns);
  // The measure's first stored hour (the start of its commissioning period), if any.
  Result<std::optional<std::int64_t>> FirstHour(std::int64_t measure_pk);
  // Alarm events with since <= time < until, oldest first.
  Result<std::vector<AlarmEventRecord>> Events(std::int64_t since_ns, std::int64_t until_ns);
  // Acknowledgements with since <= time < until, oldest first.
  Result<std::vector<AcknowledgementRecord>> Acknowledgements(std::int64_t since_ns,
                                                              std::int64_t until_ns);
  // The current alarm state of every point and measure.
  Result<std::vector<AlarmStateRecord>> States();
  // A point's last spectrum starting before `before_ns` (latest), or its first one (earliest).
  Result<std::optional<StoredSpectrum>> SpectrumBefore(const std::string& point_id,
                                                       std::int64_t before_ns);
  Result<std::optional<StoredSpectrum>> FirstSpectrum(const std::string& point_id);

  // Every learned baseline (`spinward baseline`), by point and measure; those still learning are
  // left out. A small table, read whole.
  Result<std::vector<BaselineRow>> LearnedBaselines();

  // EXPLAIN QUERY PLAN of every statement above, as "name: detail" lines (for the index test).
  Result<std::vector<std::string>> ExplainAll();

 private:
  struct Impl;
  explicit ReportReader(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace spinward::storage
