#include "report_wording.h"

#include <cmath>
#include <cstdio>
#include <ctime>

namespace spinward::daemon {

std::string ReportTime(std::int64_t ns) {
  const std::time_t t = static_cast<std::time_t>(ns / 1'000'000'000LL);
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%d %H:%M", &tm);
  return buf;
}

std::string ReportLevel(std::optional<double> value) {
  if (!value || !std::isfinite(*value)) return "-";
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.3g", *value);
  return buf;
}

std::string ReportDb(std::optional<double> db) {
  if (!db || !std::isfinite(*db)) return "-";
  char buf[32];
  std::snprintf(buf, sizeof buf, "%+.1f dB", *db);
  return buf;
}

std::string ReportPercent(std::optional<double> share) {
  if (!share || !std::isfinite(*share)) return "-";
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.1f %%", 100.0 * *share);
  return buf;
}

std::string TrendRate(const Forecast& f, const std::string& unit) {
  if (f.kind == Forecast::Kind::kNoLimit || f.kind == Forecast::Kind::kTooLittleData) return "-";
  char buf[64];
  if (f.log_scale) {
    std::snprintf(buf, sizeof buf, "%+.3g %%/d", 100.0 * f.per_day);
  } else {
    std::snprintf(buf, sizeof buf, "%+.3g %s/d", f.per_day, unit.c_str());
  }
  return buf;
}

std::string ForecastKind(const Forecast& f) {
  switch (f.kind) {
    case Forecast::Kind::kHeading:
      return "heading";
    case Forecast::Kind::kAlreadyBeyond:
      return "beyond";
    case Forecast::Kind::kNotHeading:
      return "not_heading";
    case Forecast::Kind::kTooLittleData:
      return "too_little_data";
    case Forecast::Kind::kNoLimit:
      return "no_limit";
  }
  return "no_limit";
}

std::string ForecastPhrase(const Forecast& f, const ReportOptions& options) {
  switch (f.kind) {
    case Forecast::Kind::kHeading: {
      std::string range = ReportTime(f.earliest_ns).substr(5) + " to " +
                          (f.latest_ns ? ReportTime(*f.latest_ns).substr(5) : "not bounded");
      return ReportTime(f.likely_ns) + " (" + range + ")";
    }
    case Forecast::Kind::kAlreadyBeyond:
      return "at or above the limit";
    case Forecast::Kind::kNotHeading:
      return "not heading for the limit within " +
             std::to_string(options.horizon_ns / kReportDayNs) + " d";
    case Forecast::Kind::kTooLittleData:
      return "too little data (" + std::to_string(f.fitted_hours) + " h)";
    case Forecast::Kind::kNoLimit:
      return "no limit";
  }
  return "";
}

}  // namespace spinward::daemon
