// What the nightly report says, computed once and rendered as HTML, CSV or text: a summary of the
// period (points by state, alarms raised / cleared / acknowledged, sensor faults, completeness),
// the points ranked by how far their bands moved against their baseline and the week before, a
// time-to-limit forecast per limited measure (Theil-Sen over hourly means, estimators/
// trend_forecast.h), and for the points that matter their hourly trends, alarm and
// acknowledgement marks and spectra. The method is explained in docs/report.md.
// Thread-safety: BuildReport reads through the caller's reader; the model is a plain value.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "report_baseline.h"
#include "spinward/estimators/result.h"
#include "spinward/storage/alarm_records.h"
#include "spinward/storage/report_reader.h"

namespace spinward::daemon {

inline constexpr std::int64_t kReportHourNs = 3600LL * 1'000'000'000LL;
inline constexpr std::int64_t kReportDayNs = 24 * kReportHourNs;

struct MeasureLimits {
  std::optional<double> alert;
  std::optional<double> danger;
  std::string source;  // "site file", "alarm events", or empty when unknown
};

// Facts the database does not hold, from the site file when one is given.
struct SiteFacts {
  std::map<std::string, std::string> machine_of_point;
  std::map<std::string, double> speed_rpm_of_point;
  // (point, measure) -> limits
  std::map<std::pair<std::string, std::string>, MeasureLimits> limits;
  // Bearing defect frequencies per point (name, Hz), when a bearing is known.
  std::map<std::string, std::vector<std::pair<std::string, double>>> defect_lines_of_point;
};

struct ReportOptions {
  std::int64_t from_ns = 0;
  std::int64_t to_ns = 0;
  std::string machine;              // only this machine's points (needs SiteFacts)
  std::vector<std::string> points;  // always shown in detail
  std::int64_t current_window_ns = 4 * kReportHourNs;  // "now": the period's last hours
  std::int64_t fit_window_ns = 7 * kReportDayNs;       // forecast fit: the last week
  std::int64_t horizon_ns = 90 * kReportDayNs;         // crossings later than this don't count
  int min_fit_hours = 6;                               // fewer hourly means: no forecast
  double confidence = 0.95;
  int top_points = 10;  // ranked points shown in detail besides the alarmed and asked ones

  Status Validate() const;
};

struct Forecast {
  enum class Kind { kNoLimit, kTooLittleData, kAlreadyBeyond, kHeading, kNotHeading };
  Kind kind = Kind::kNoLimit;
  std::int64_t earliest_ns = 0;
  std::int64_t likely_ns = 0;
  std::optional<std::int64_t> latest_ns;  // none: the slope's range includes flat
  // The fitted trend: on a log scale (exponential growth) when every value is positive, as band
  // values are; then `per_day` is the relative change per day (0.5: +50 % a day). Otherwise
  // linear, and `per_day` is in the measure's unit per day.
  bool log_scale = false;
  double per_day = 0.0;
  int fitted_hours = 0;
};

struct MeasureReview {
  storage::ReportMeasure measure;
  std::string state = "normal";    // alarm state; "normal" when none is stored
  std::optional<double> current;   // median of hourly means in the current window
  std::optional<double> baseline;  // from the BaselineProvider
  std::string baseline_source;
  std::optional<double> week;  // median of hourly means in the 7 days before the current window
  std::optional<double> vs_baseline_db;  // 20 log10(current / baseline)
  std::optional<double> vs_week_db;
  MeasureLimits limits;
  Forecast alert, danger;
  std::vector<storage::TrendRow> hours;  // hourly buckets in the period
};

struct PointReview {
  std::string point_id;
  std::string machine;
  std::string state = "normal";  // worst state of its measures
  double score_db = 0.0;         // largest |change| in dB of its bands
  std::string key_measure;       // the band that moved most
  std::int64_t received = 0;     // intervals received in the period (sensor faults included)
  std::int64_t expected = 0;     // whole hours x the point's usual intervals per hour
  std::int64_t fault_intervals = 0;
  std::vector<MeasureReview> measures;
  std::vector<storage::AlarmEventRecord> events;
  std::vector<storage::AcknowledgementRecord> acks;
  std::optional<storage::StoredSpectrum> latest_spectrum;
  std::optional<storage::StoredSpectrum> baseline_spectrum;
  std::optional<double> speed_rpm;
  std::vector<std::pair<std::string, double>> defect_lines;
  std::string why_detailed;  // empty: not shown in detail

  std::optional<double> Completeness() const;  // received / expected, none when expected is 0
  const MeasureReview* Key() const;            // the key measure, or null
  // The measure most urgently heading for its alert (danger: false) or danger limit: at or above
  // it first, then the earliest likely crossing; null when no measure has that limit.
  const MeasureReview* Soonest(bool danger) const;
};

struct ReportModel {
  ReportOptions options;
  std::vector<PointReview> points;  // ranked: largest move first
  std::map<std::string, int> points_by_state;
  int alarms_raised = 0;   // events into alert or danger
  int alarms_cleared = 0;  // events back to normal
  int sensor_fault_events = 0;
  std::vector<storage::AlarmEventRecord> events;
  std::vector<storage::AcknowledgementRecord> acks;
  std::int64_t received = 0, expected = 0;
};

Result<ReportModel> BuildReport(storage::ReportReader& reader, BaselineProvider& baseline,
                                const SiteFacts& site, const ReportOptions& options);

}  // namespace spinward::daemon
