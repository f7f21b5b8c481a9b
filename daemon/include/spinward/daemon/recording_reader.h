// Recordings on disk: one channel of a WAV, CSV or raw sample file, read whole into memory as
// doubles with the sample rate it was taken at. `spinward analyze` reads its FILE through here, and
// the daemon's drop directory will too, so the readers share one options struct and one result.
//
// ReadRecording picks the reader from ReadOptions::format or, when that is kAuto, from the file's
// extension (.wav, .csv/.txt, .f32, .s16). Each format also has its own entry point in
// wav_reader.h, csv_reader.h and raw_reader.h, which parse bytes already in memory (the seam for
// tests and fuzzing). Every error is one line that starts with the file's name and says what is
// wrong with it, e.g. "pump.wav: data chunk declares 96000 bytes but only 812 follow (truncated)".
// The Recording owns its samples; nothing refers back to the file once it is read.
// Thread-safety: pure functions; call from any thread.
#pragma once

#include <cstddef>
#include <filesystem>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

enum class RecordingFormat { kAuto, kWav, kCsv, kRawFloat32, kRawInt16 };

// "auto", "wav", "csv", "f32" ("float32"), "s16" ("int16").
Result<RecordingFormat> ParseRecordingFormat(std::string_view text);
std::string_view ToString(RecordingFormat format);
// The format a file name's extension implies; fails for an unknown or ambiguous extension.
Result<RecordingFormat> FormatFromExtension(const std::filesystem::path& path);

struct Recording {
  std::vector<double> samples;  // the selected channel; integer PCM scaled to [-1, 1) full scale
  double sample_rate_hz = 0.0;
  std::size_t channel_count = 0;  // channels (CSV: data columns) the file holds
  std::size_t channel = 0;        // the one that was read
  std::string name;               // what messages call it: the path, or the name the caller gave
  std::string source;  // e.g. "pump.wav: WAV PCM 24-bit, 2 channels, channel 0, 25600 Hz"

  double DurationSeconds() const;
};

struct ReadOptions {
  RecordingFormat format = RecordingFormat::kAuto;
  std::size_t channel = 0;  // WAV and raw: interleaved channel; CSV: data column (time excluded)
  std::string column;       // CSV only: take the column with this header name (overrides channel)
  // 0: from the file (WAV header, CSV time column). Required for raw files and for CSV without a
  // time column. When given, it overrides what the file says, and the source description says so.
  double sample_rate_hz = 0.0;
  std::size_t raw_channel_count = 1;  // raw only: interleaved channels per frame

  // Names the first bad field and its value.
  Status Validate() const;
};

// Reads one channel of `path`. Errors start with the path.
Result<Recording> ReadRecording(const std::filesystem::path& path, const ReadOptions& options);

// The whole file as bytes; "PATH: no such file", "PATH: is a directory", "PATH: cannot read: ...".
Result<std::string> ReadFileBytes(const std::filesystem::path& path);

}  // namespace spinward::daemon
