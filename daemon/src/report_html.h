// The nightly report as one self-contained HTML page: inline style sheet and SVG charts, no
// script, no external reference (it opens offline and survives being mailed). Sections, in order
// and with these ids: caution (the advisory banner), summary, changes ("what changed": the ranking
// with forecasts), alarms (events and acknowledgements of the period), points (one article per
// point shown in detail, with a trend chart per band and a spectrum chart), method.
// Thread-safety: pure function.
#pragma once

#include <cstdint>
#include <string>

#include "report_model.h"

namespace spinward::daemon {

std::string RenderReportHtml(const ReportModel& model, std::int64_t generated_ns);

}  // namespace spinward::daemon
