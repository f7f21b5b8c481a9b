// The words and numbers the report's HTML, CSV and text forms share: the caution banner, forecast
// phrases, levels, dB changes, percentages and UTC times, so the three forms never disagree.
// Thread-safety: pure functions.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "report_model.h"

namespace spinward::daemon {

inline constexpr const char* kReportCaution =
    "Advisory only. Spinward's alarms, rankings and forecasts support a person's judgement; they "
    "do not replace the site's maintenance rules, its protection systems or licensed practice, "
    "which prevail.";

// "2026-03-02 10:00" (UTC, minutes).
std::string ReportTime(std::int64_t ns);
// "3.21" with 3 significant digits; "-" when absent.
std::string ReportLevel(std::optional<double> value);
// "+6.0 dB"; "-" when absent.
std::string ReportDb(std::optional<double> db);
// "98.6 %"; "-" when absent.
std::string ReportPercent(std::optional<double> share);
// "2026-03-04 06:00 (03-03 22:00 to 03-05 01:00)", "at or above the limit", "not heading for the
// limit within 90 d", "too little data (4 h)", "no limit".
std::string ForecastPhrase(const Forecast& forecast, const ReportOptions& options);
// The fitted trend per day: "+7.1 %/d" (log scale) or "+0.052 mm/s/d"; "-" without a fit.
std::string TrendRate(const Forecast& forecast, const std::string& unit);
// A short machine-readable kind: heading, beyond, not_heading, too_little_data, no_limit.
std::string ForecastKind(const Forecast& forecast);

}  // namespace spinward::daemon
