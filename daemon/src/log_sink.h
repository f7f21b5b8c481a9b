// A record sink that writes one short line per record at debug level, and keeps count; the run
// command prints a summary of the counts every minute at info level.
// Thread-safety: Consume from any thread.
#pragma once

#include <atomic>
#include <cstdio>

#include "daemon_logging.h"
#include "spinward/daemon/record_sink.h"

namespace spinward::daemon {

class LogSink final : public RecordSink {
 public:
  void Consume(const storage::MeasurementRecord& record) override {
    ++records_;
    std::string line = "record " + record.point_id + " segments " +
                       std::to_string(record.segment_count) + " rms " +
                       std::to_string(record.indicators.rms) + " " + record.sample_unit;
    for (const auto& band : record.bands) {
      char value[64];
      std::snprintf(value, sizeof value, " %s %.4g %s", band.name.c_str(), band.rms,
                    band.unit.c_str());
      line += value;
    }
    LogLine("debug", line);
  }
  std::uint64_t records() const { return records_; }

 private:
  std::atomic<std::uint64_t> records_{0};
};

}  // namespace spinward::daemon
