#include "spinward/daemon/csv_reader.h"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <optional>
#include <string>
#include <vector>

namespace spinward::daemon {
namespace {

Error Fail(std::string_view source, const std::string& problem) {
  return Error{std::string(source) + ": " + problem};
}

Error FailAt(std::string_view source, std::size_t line, const std::string& problem) {
  return Error{std::string(source) + ":" + std::to_string(line) + ": " + problem};
}

std::string_view Trim(std::string_view text) {
  const auto first = text.find_first_not_of(" \t\r");
  if (first == std::string_view::npos) return {};
  const auto last = text.find_last_not_of(" \t\r");
  return text.substr(first, last - first + 1);
}

std::string_view Unquote(std::string_view cell) {
  cell = Trim(cell);
  if (cell.size() >= 2 && cell.front() == '"' && cell.back() == '"') {
    cell = cell.substr(1, cell.size() - 2);
  }
  return cell;
}

std::vector<std::string_view> SplitCells(std::string_view line, char delimiter) {
  std::vector<std::string_view> cells;
  std::size_t start = 0;
  while (true) {
    const auto end = line.find(delimiter, start);
    cells.push_back(Unquote(line.substr(start, end == std::string_view::npos ? end : end - start)));
    if (end == std::string_view::npos) break;
    start = end + 1;
  }
  return cells;
}

// A number as std::from_chars reads it, with an optional leading '+'. NaN and Inf are parsed
// (so the error can say "not finite" rather than "not a number").
std::optional<double> ParseNumber(std::string_view cell) {
  if (!cell.empty() && cell.front() == '+') cell.remove_prefix(1);
  if (cell.empty()) return std::nullopt;
  double value = 0.0;
  const auto [end, error] = std::from_chars(cell.data(), cell.data() + cell.size(), value);
  if (error != std::errc() || end != cell.data() + cell.size()) return std::nullopt;
  return value;
}

std::string Lower(std::string_view text) {
  std::string lower(text);
  std::transform(lower.begin(), lower.end(), lower.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return lower;
}

// Seconds per unit of a time column's name, or 0 when the name is not a time column.
double TimeColumnScale(std::string_view name) {
  const std::string lower = Lower(name);
  if (lower == "time" || lower == "t" || lower == "time_s" || lower == "seconds" ||
      lower == "timestamp" || lower == "time (s)" || lower == "time[s]") {
    return 1.0;
  }
  if (lower == "time_ms" || lower == "t_ms") return 1e-3;
  if (lower == "time_us" || lower == "t_us") return 1e-6;
  return 0.0;
}

struct Line {
  std::size_t number = 0;
  std::string_view text;
};

// The lines that hold data or a header: not blank, not a '#' comment.
std::vector<Line> ContentLines(std::string_view text) {
  std::vector<Line> lines;
  std::size_t start = 0;
  std::size_t number = 0;
  while (start <= text.size()) {
    auto end = text.find('\n', start);
    if (end == std::string_view::npos) end = text.size();
    ++number;
    const std::string_view line = Trim(text.substr(start, end - start));
    if (!line.empty() && line.front() != '#') lines.push_back({number, line});
    start = end + 1;
  }
  return lines;
}

std::string Hz(double hz) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.10g Hz", hz);
  return buffer;
}

}  // namespace

Result<Recording> ParseCsv(std::string_view text, std::string_view source_name,
                           const ReadOptions& options) {
  if (Status valid = options.Validate(); !valid.ok()) return Fail(source_name, valid.message());
  const std::vector<Line> lines = ContentLines(text);
  if (lines.empty()) return Fail(source_name, "no data lines");

  const std::string_view first = lines.front().text;
  char delimiter = ',';
  if (first.find(',') == std::string_view::npos) {
    if (first.find(';') != std::string_view::npos) {
      delimiter = ';';
    } else if (first.find('\t') != std::string_view::npos) {
      delimiter = '\t';
    }
  }
  const std::vector<std::string_view> first_cells = SplitCells(first, delimiter);
  const std::size_t cell_count = first_cells.size();
  const bool has_header = std::any_of(first_cells.begin(), first_cells.end(),
                                      [](std::string_view c) { return !ParseNumber(c); });

  // Which cell is time (if any), and which data column we take.
  std::optional<std::size_t> time_cell;
  double time_scale = 1.0;
  std::vector<std::size_t> data_cells;
  for (std::size_t c = 0; c < cell_count; ++c) {
    const double scale = has_header ? TimeColumnScale(first_cells[c]) : 0.0;
    if (scale > 0.0 && !time_cell) {
      time_cell = c;
      time_scale = scale;
    } else {
      data_cells.push_back(c);
    }
  }
  auto column_label = [&](std::size_t cell) {
    return has_header ? "'" + std::string(first_cells[cell]) + "'"
                      : std::to_string(cell + 1);  // 1-based, as a spreadsheet counts
  };
  std::size_t value_cell = 0;
  std::size_t channel = options.channel;
  if (!options.column.empty()) {
    if (!has_header) {
      return Fail(source_name,
                  "column '" + options.column + "' asked for, but the file has no header line");
    }
    auto it = std::find_if(data_cells.begin(), data_cells.end(),
                           [&](std::size_t c) { return first_cells[c] == options.column; });
    if (it == data_cells.end()) {
      std::string names;
      for (std::size_t c : data_cells) names += (names.empty() ? "" : ", ") + column_label(c);
      return Fail(source_name, "no data column '" + options.column + "' (data columns: " +
                                   (names.empty() ? std::string("none") : names) + ")");
    }
    value_cell = *it;
    channel = static_cast<std::size_t>(it - data_cells.begin());
  } else {
    if (data_cells.empty()) return Fail(source_name, "no data column, only a time column");
    if (options.channel >= data_cells.size()) {
      return Fail(source_name, "channel " + std::to_string(options.channel) +
                                   " requested but the file has " +
                                   std::to_string(data_cells.size()) + " data column" +
                                   (data_cells.size() == 1 ? "" : "s"));
    }
    value_cell = data_cells[options.channel];
  }

  Recording recording;
  recording.channel_count = data_cells.size();
  recording.channel = channel;
  std::vector<double> times;
  recording.samples.reserve(lines.size());
  if (time_cell) times.reserve(lines.size());
  for (std::size_t i = has_header ? 1 : 0; i < lines.size(); ++i) {
    const Line& line = lines[i];
    const std::vector<std::string_view> cells = SplitCells(line.text, delimiter);
    if (cells.size() != cell_count) {
      return FailAt(source_name, line.number,
                    std::to_string(cells.size()) + " cells where the " +
                        (has_header ? "header has " : "first line has ") +
                        std::to_string(cell_count));
    }
    auto number = [&](std::size_t cell) -> Result<double> {
      const auto value = ParseNumber(cells[cell]);
      if (!value) {
        return FailAt(source_name, line.number,
                      "column " + column_label(cell) + ": '" + std::string(cells[cell]) +
                          "' is not a number");
      }
      if (!std::isfinite(*value)) {
        return FailAt(
            source_name, line.number,
            "column " + column_label(cell) + ": '" + std::string(cells[cell]) + "' is not finite");
      }
      return *value;
    };
    auto value = number(value_cell);
    if (!value.ok()) return value.status();
    recording.samples.push_back(*value);
    if (time_cell) {
      auto t = number(*time_cell);
      if (!t.ok()) return t.status();
      times.push_back(*t * time_scale);
    }
  }
  if (recording.samples.empty()) return Fail(source_name, "a header but no data lines");

  std::string rate_note;
  double time_rate = 0.0;
  if (time_cell) {
    const std::size_t n = times.size();
    if (n < 2) return Fail(source_name, "one sample: a time column cannot give a rate");
    const double period = (times.back() - times.front()) / static_cast<double>(n - 1);
    if (!(period > 0.0)) {
      return Fail(source_name, "time column " + column_label(*time_cell) +
                                   " does not increase (first " + std::to_string(times.front()) +
                                   " s, last " + std::to_string(times.back()) + " s)");
    }
    // A step half a period away from the mean means a missing or repeated sample: the rate would
    // then misplace every line of the spectrum. Slow drift of a logger's clock passes.
    const std::size_t first_data_line = has_header ? 1 : 0;
    for (std::size_t k = 1; k < n; ++k) {
      const double step = times[k] - times[k - 1];
      if (std::abs(step - period) > 0.5 * period) {
        char problem[200];
        std::snprintf(problem, sizeof problem,
                      "time %.9g s comes %.9g s after the one before; the mean period is %.9g s "
                      "(missing or repeated samples?)",
                      times[k], step, period);
        return FailAt(source_name, lines[first_data_line + k].number, problem);
      }
    }
    time_rate = 1.0 / period;
  }
  if (options.sample_rate_hz > 0.0) {
    recording.sample_rate_hz = options.sample_rate_hz;
    if (time_cell) rate_note = " (rate given; time column says " + Hz(time_rate) + ")";
  } else if (time_cell) {
    recording.sample_rate_hz = time_rate;
    rate_note = " (rate from time column " + column_label(*time_cell) + ")";
  } else {
    return Fail(
        source_name,
        "no time column and no sample rate; give the rate (--rate HZ) or a 'time_s' column");
  }

  recording.name = std::string(source_name);
  recording.source = std::string(source_name) + ": CSV column " + column_label(value_cell) + ", " +
                     std::to_string(data_cells.size()) + " data column" +
                     (data_cells.size() == 1 ? "" : "s") + ", " + Hz(recording.sample_rate_hz) +
                     rate_note + ", " + std::to_string(recording.samples.size()) + " samples";
  return recording;
}

Result<Recording> ReadCsv(const std::filesystem::path& path, const ReadOptions& options) {
  auto bytes = ReadFileBytes(path);
  if (!bytes.ok()) return bytes.status();
  return ParseCsv(*bytes, path.string(), options);
}

}  // namespace spinward::daemon
