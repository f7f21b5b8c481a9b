// Renders query results (trend rows, alarm events, point status) as CSV (RFC 4180 quoting, a
// header row, times as ISO 8601 UTC) or JSON (one object, times as ISO 8601 text and as ns), for
// the CLI's trend, alarms and status commands and anything else that prints them.
// Thread-safety: pure functions.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/result.h"
#include "spinward/storage/alarm_records.h"
#include "spinward/storage/trend_store.h"

namespace spinward::storage {

enum class ReportFormat { kCsv, kJson };
Result<ReportFormat> ParseReportFormat(std::string_view text);  // "csv", "json"

std::string RenderTrend(const TrendQuery& query, std::string_view unit,
                        const std::vector<TrendRow>& rows, ReportFormat format);
std::string RenderAlarms(const std::vector<AlarmEventRecord>& events, ReportFormat format);
std::string RenderStatus(const std::vector<MeasureStatus>& rows, ReportFormat format);

}  // namespace spinward::storage
