// Writes each measurement record as one JSON object per line (JSON Lines), for tools and for the
// interim output before trend storage: point, interval times (UTC ISO 8601 and ns), segment count,
// indicators, band values with units, and optionally the spectrum. Layout in docs/records.md.
// Thread-safety: Consume locks; records from several workers interleave by whole lines.
#pragma once

#include <cstdio>
#include <filesystem>
#include <memory>
#include <mutex>
#include <string>

#include "spinward/daemon/record_sink.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

// One record as a JSON object on one line (no trailing newline).
std::string RecordToJson(const storage::MeasurementRecord& record, bool with_spectrum);
// JSON text pieces: a quoted, escaped string; a number with 10 significant digits, or null when
// not finite (JSON has no NaN).
void AppendJsonString(std::string& out, const std::string& text);
void AppendJsonNumber(std::string& out, double value);
// UTC ISO 8601 with milliseconds, e.g. "2026-12-01T06:00:00.000Z".
std::string FormatUtc(std::int64_t ns_since_epoch);

class JsonLinesSink final : public RecordSink {
 public:
  static Result<std::shared_ptr<JsonLinesSink>> Open(const std::filesystem::path& path,
                                                     bool with_spectrum);
  ~JsonLinesSink() override;
  void Consume(const storage::MeasurementRecord& record) override;
  void Flush() override;
  std::uint64_t write_errors() const { return write_errors_; }

 private:
  JsonLinesSink(std::FILE* file, bool with_spectrum) : file_(file), with_spectrum_(with_spectrum) {}
  std::mutex mutex_;
  std::FILE* file_;
  bool with_spectrum_;
  std::uint64_t write_errors_ = 0;
};

}  // namespace spinward::daemon
