#include "spinward/daemon/json_lines_sink.h"

#include <cerrno>
#include <cmath>
#include <cstring>
#include <ctime>

namespace spinward::daemon {
void AppendJsonNumber(std::string& out, double value) {
  if (!std::isfinite(value)) {  // JSON has no NaN: a missing value is null
    out += "null";
    return;
  }
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.10g", value);
  out += buffer;
}

void AppendJsonString(std::string& out, const std::string& text) {
  out += '"';
  for (char c : text) {
    if (c == '"' || c == '\\') {
      out += '\\';
      out += c;
    } else if (static_cast<unsigned char>(c) < 0x20) {
      char buffer[8];
      std::snprintf(buffer, sizeof buffer, "\\u%04x", c);
      out += buffer;
    } else {
      out += c;
    }
  }
  out += '"';
}

std::string FormatUtc(std::int64_t ns) {
  std::time_t seconds = static_cast<std::time_t>(ns / 1'000'000'000);
  std::int64_t ms = (ns % 1'000'000'000) / 1'000'000;
  if (ms < 0) {
    ms += 1000;
    seconds -= 1;
  }
  std::tm tm{};
  gmtime_r(&seconds, &tm);
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%04d-%02d-%02dT%02d:%02d:%02d.%03dZ", tm.tm_year + 1900,
                tm.tm_mon + 1, tm.tm_mday, tm.tm_hour, tm.tm_min, tm.tm_sec, static_cast<int>(ms));
  return buffer;
}

std::string RecordToJson(const storage::MeasurementRecord& r, bool with_spectrum) {
  std::string out;
  out.reserve(with_spectrum ? 16 * r.spectrum.values.size() + 512 : 512);
  out += "{\"schema\":1,\"point\":";
  AppendJsonString(out, r.point_id);
  out += ",\"start\":\"" + FormatUtc(r.interval_start_ns) + "\",\"end\":\"" +
         FormatUtc(r.interval_end_ns) + "\"";
  out += ",\"start_ns\":" + std::to_string(r.interval_start_ns) +
         ",\"end_ns\":" + std::to_string(r.interval_end_ns);
  out += ",\"segments\":" + std::to_string(r.segment_count);
  out += ",\"sample_unit\":";
  AppendJsonString(out, r.sample_unit);
  const auto& i = r.indicators;
  out += ",\"indicators\":{\"mean\":";
  AppendJsonNumber(out, i.mean);
  out += ",\"rms\":";
  AppendJsonNumber(out, i.rms);
  out += ",\"peak\":";
  AppendJsonNumber(out, i.peak);
  out += ",\"peak_to_peak\":";
  AppendJsonNumber(out, i.peak_to_peak);
  out += ",\"crest_factor\":";
  AppendJsonNumber(out, i.crest_factor);
  out += ",\"kurtosis\":";
  AppendJsonNumber(out, i.kurtosis);
  out += ",\"samples\":" + std::to_string(i.count) + "}";
  out += ",\"bands\":[";
  for (std::size_t b = 0; b < r.bands.size(); ++b) {
    if (b) out += ',';
    out += "{\"name\":";
    AppendJsonString(out, r.bands[b].name);
    out += ",\"lo_hz\":";
    AppendJsonNumber(out, r.bands[b].lo_hz);
    out += ",\"hi_hz\":";
    AppendJsonNumber(out, r.bands[b].hi_hz);
    out += ",\"rms\":";
    AppendJsonNumber(out, r.bands[b].rms);
    out += ",\"unit\":";
    AppendJsonString(out, r.bands[b].unit);
    out += '}';
  }
  out += ']';
  if (r.sensor_fault) {
    out += ",\"sensor_fault\":";
    AppendJsonString(out, r.sensor_fault_reason);
  }
  if (with_spectrum && !r.spectrum.values.empty()) {
    out += ",\"spectrum\":{\"bin_width_hz\":";
    AppendJsonNumber(out, r.spectrum.BinWidthHz());
    out += ",\"unit\":";
    AppendJsonString(out, r.sample_unit + "^2/Hz");
    out += ",\"values\":[";
    for (std::size_t k = 0; k < r.spectrum.values.size(); ++k) {
      if (k) out += ',';
      AppendJsonNumber(out, r.spectrum.values[k]);
    }
    out += "]}";
  }
  out += '}';
  return out;
}

Result<std::shared_ptr<JsonLinesSink>> JsonLinesSink::Open(const std::filesystem::path& path,
                                                           bool with_spectrum) {
  std::FILE* file = std::fopen(path.c_str(), "a");
  if (file == nullptr) {
    return Error{path.string() + ": cannot open for appending: " + std::strerror(errno)};
  }
  return std::shared_ptr<JsonLinesSink>(new JsonLinesSink(file, with_spectrum));
}

JsonLinesSink::~JsonLinesSink() {
  if (file_) std::fclose(file_);
}

void JsonLinesSink::Consume(const storage::MeasurementRecord& record) {
  std::string line = RecordToJson(record, with_spectrum_);
  line += '\n';
  std::lock_guard lock(mutex_);
  if (std::fwrite(line.data(), 1, line.size(), file_) != line.size()) ++write_errors_;
}

void JsonLinesSink::Flush() {
  std::lock_guard lock(mutex_);
  std::fflush(file_);
}

}  // namespace spinward::daemon
