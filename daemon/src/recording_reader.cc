#include "spinward/daemon/recording_reader.h"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdint>
#include <fstream>
#include <system_error>

#include "spinward/daemon/csv_reader.h"
#include "spinward/daemon/raw_reader.h"
#include "spinward/daemon/wav_reader.h"

namespace spinward::daemon {
namespace {

// Recordings are read whole; past this a file is more likely a mistake than an hour of vibration
// (1 GiB is over five hours of one 16-bit channel at 25.6 kHz).
constexpr std::uintmax_t kMaxRecordingBytes = std::uintmax_t{1} << 30;

}  // namespace

Result<RecordingFormat> ParseRecordingFormat(std::string_view text) {
  if (text == "auto") return RecordingFormat::kAuto;
  if (text == "wav") return RecordingFormat::kWav;
  if (text == "csv") return RecordingFormat::kCsv;
  if (text == "f32" || text == "float32") return RecordingFormat::kRawFloat32;
  if (text == "s16" || text == "int16") return RecordingFormat::kRawInt16;
  return Error{"unknown recording format '" + std::string(text) + "' (auto, wav, csv, f32, s16)"};
}

std::string_view ToString(RecordingFormat format) {
  switch (format) {
    case RecordingFormat::kAuto:
      return "auto";
    case RecordingFormat::kWav:
      return "wav";
    case RecordingFormat::kCsv:
      return "csv";
    case RecordingFormat::kRawFloat32:
      return "f32";
    case RecordingFormat::kRawInt16:
      return "s16";
  }
  return "?";
}

Result<RecordingFormat> FormatFromExtension(const std::filesystem::path& path) {
  std::string ext = path.extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  if (ext == ".wav" || ext == ".wave") return RecordingFormat::kWav;
  if (ext == ".csv" || ext == ".txt" || ext == ".tsv") return RecordingFormat::kCsv;
  if (ext == ".f32") return RecordingFormat::kRawFloat32;
  if (ext == ".s16") return RecordingFormat::kRawInt16;
  if (ext == ".raw" || ext == ".bin" || ext == ".pcm") {
    return Error{path.string() + ": '" + ext +
                 "' does not say float32 or int16; name the format (f32 or s16)"};
  }
  return Error{path.string() + ": cannot tell the format from the extension '" + ext +
               "' (.wav, .csv, .txt, .f32, .s16); name the format"};
}

double Recording::DurationSeconds() const {
  return sample_rate_hz > 0.0 ? static_cast<double>(samples.size()) / sample_rate_hz : 0.0;
}

Status ReadOptions::Validate() const {
  if (!std::isfinite(sample_rate_hz) || sample_rate_hz < 0.0) {
    return Status::Fail("sample rate " + std::to_string(sample_rate_hz) +
                        " Hz must be positive and finite (0: from the file)");
  }
  if (raw_channel_count == 0) return Status::Fail("raw channel count must be at least 1");
  return Status::Ok();
}

Result<std::string> ReadFileBytes(const std::filesystem::path& path) {
  std::error_code ec;
  const auto status = std::filesystem::status(path, ec);
  if (!std::filesystem::exists(status)) return Error{path.string() + ": no such file"};
  if (std::filesystem::is_directory(status)) return Error{path.string() + ": is a directory"};
  const auto size = std::filesystem::file_size(path, ec);
  if (ec) return Error{path.string() + ": cannot read: " + ec.message()};
  if (size > kMaxRecordingBytes) {
    return Error{path.string() + ": " + std::to_string(size) + " bytes is over the " +
                 std::to_string(kMaxRecordingBytes) + "-byte limit for a recording"};
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) return Error{path.string() + ": cannot open for reading"};
  std::string bytes(static_cast<std::size_t>(size), '\0');
  in.read(bytes.data(), static_cast<std::streamsize>(size));
  if (static_cast<std::uintmax_t>(in.gcount()) != size) {
    return Error{path.string() + ": read " + std::to_string(in.gcount()) + " of " +
                 std::to_string(size) + " bytes"};
  }
  return bytes;
}

Result<Recording> ReadRecording(const std::filesystem::path& path, const ReadOptions& options) {
  // The file first: "no such file" says more than "unknown extension" about a mistyped name.
  auto bytes = ReadFileBytes(path);
  if (!bytes.ok()) return bytes.status();
  RecordingFormat format = options.format;
  if (format == RecordingFormat::kAuto) {
    auto guessed = FormatFromExtension(path);
    if (!guessed.ok()) return guessed.status();
    format = *guessed;
  }
  const std::string name = path.string();
  switch (format) {
    case RecordingFormat::kWav:
      return ParseWav(*bytes, name, options);
    case RecordingFormat::kCsv:
      return ParseCsv(*bytes, name, options);
    case RecordingFormat::kRawFloat32:
      return ParseRaw(*bytes, name, RawEncoding::kFloat32, options);
    case RecordingFormat::kRawInt16:
      return ParseRaw(*bytes, name, RawEncoding::kInt16, options);
    case RecordingFormat::kAuto:
      break;
  }
  return Error{name + ": no reader for this format"};
}

}  // namespace spinward::daemon
