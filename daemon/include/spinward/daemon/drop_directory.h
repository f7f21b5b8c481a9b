// A watched drop directory: an acquisition box drops WAV, CSV, raw-sample or raw-frame files, and
// each is processed once, then moved to done/ or rejected/ (with a NAME.reason.txt beside it and
// the reason logged). Which point a file feeds is configured by file-name pattern.
//
// A file is taken only once it has not changed for settle_time, so a file still being written is
// left alone. A WAV, CSV or raw recording carries no timestamp of its own: its last sample is taken
// to be at the file's modification time (the box wrote it when the recording ended). A frames file
// carries its own times and sequence numbers. Files wait (never drop) while a point is behind.
// The scan runs on its own thread; ScanOnce is public so tests can drive it without waiting.
// Thread-safety: Start/Stop/ScanOnce from one controlling thread.
#pragma once

#include <atomic>
#include <chrono>
#include <filesystem>
#include <functional>
#include <memory>
#include <string>
#include <thread>
#include <vector>

#include "spinward/daemon/network_listener.h"
#include "spinward/daemon/recording_reader.h"
#include "spinward/daemon/sample_source.h"
#include "spinward/daemon/source_counters.h"

namespace spinward::daemon {

struct DropFileRule {
  std::string pattern;  // glob on the file name (fnmatch), e.g. "P101_DE_*.wav"
  std::string point_id;
  std::string sensor_id;
  double point_sample_rate_hz = 0.0;
  bool frames = false;  // a file of concatenated protocol frames
  ReadOptions read;     // format, rate (csv/raw), channel
};

struct DropDirectoryOptions {
  std::filesystem::path path;
  std::chrono::milliseconds poll_interval{2000};
  std::chrono::milliseconds settle_time{1000};
  std::size_t block_samples = 8192;  // a recording is offered in blocks of this many samples
  std::size_t max_frame_bytes = std::size_t{1} << 20;
  std::vector<DropFileRule> rules;
};

class DropDirectory final : public SampleSource {
 public:
  DropDirectory(DropDirectoryOptions options, BlockConsumer& consumer, SourceReporter report = {});
  ~DropDirectory() override;

  std::string Describe() const override;
  Status Start() override;  // creates done/ and rejected/, then scans every poll_interval
  void Stop() override;
  // One pass over the directory; returns the number of files it moved.
  std::size_t ScanOnce();
  const SourceCounters& counters() const { return counters_; }

 private:
  // Offers the file's blocks; an error means the file is rejected with that reason.
  Status ProcessFile(const std::filesystem::path& file, const DropFileRule& rule);
  Status OfferWaiting(SampleBlock&& block);
  void Move(const std::filesystem::path& file, bool accepted, const std::string& reason);

  DropDirectoryOptions options_;
  BlockConsumer& consumer_;
  SourceReporter report_;
  SourceCounters counters_;
  std::atomic<bool> stopping_{false};
  std::thread thread_;
};

}  // namespace spinward::daemon
