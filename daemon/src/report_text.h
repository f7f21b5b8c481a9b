// The nightly report's plain forms: a short text summary for a morning e-mail, and CSV tables
// (RFC 4180 quoting, one header row, UTC times as ISO 8601) for spreadsheets.
// Thread-safety: pure functions.
#pragma once

#include <map>
#include <string>

#include "report_model.h"

namespace spinward::daemon {

std::string RenderReportText(const ReportModel& model, int max_lines = 10);

// File name ("ranking.csv", "measures.csv", "alarms.csv", "acknowledgements.csv") -> contents.
std::map<std::string, std::string> RenderReportCsv(const ReportModel& model);

}  // namespace spinward::daemon
