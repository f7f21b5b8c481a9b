// CSV (and other delimited text) recordings: one sample per line, in one of the columns.
//
// Delimiter: comma, semicolon or tab, whichever the first data line uses. Blank lines and lines
// starting with '#' are skipped. A first line holding any non-numeric cell is a header; then a
// column named time, t, time_s, seconds or timestamp is a time column in seconds (time_ms: ms,
// time_us: us), which never counts as a data column and, unless ReadOptions::sample_rate_hz is
// given, sets the rate: (n - 1) / (t_last - t_first), after checking that every step between
// timestamps is within half of that mean period (a gap or repeat would misplace the spectrum).
// Without a header every column is data.
// The data column is ReadOptions::column by header name, else the channel-th data column.
// Every cell of the chosen column (and of the time column) must be a finite number; the error
// names the line, e.g. "trend.csv:17: column 'accel': 'n/a' is not a number".
// Thread-safety: pure functions.
#pragma once

#include <filesystem>
#include <string_view>

#include "spinward/daemon/recording_reader.h"

namespace spinward::daemon {

Result<Recording> ParseCsv(std::string_view text, std::string_view source_name,
                           const ReadOptions& options);
Result<Recording> ReadCsv(const std::filesystem::path& path, const ReadOptions& options);

}  // namespace spinward::daemon
