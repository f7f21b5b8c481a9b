#include "spinward/daemon/raw_reader.h"

#include <cmath>
#include <cstdio>
#include <string>

#include "sample_decoding.h"

namespace spinward::daemon {
namespace {

Error Fail(std::string_view source, const std::string& problem) {
  return Error{std::string(source) + ": " + problem};
}

}  // namespace

Result<Recording> ParseRaw(std::string_view bytes, std::string_view source_name,
                           RawEncoding encoding, const ReadOptions& options) {
  if (Status valid = options.Validate(); !valid.ok()) return Fail(source_name, valid.message());
  const char* name = encoding == RawEncoding::kFloat32 ? "float32" : "int16";
  if (options.sample_rate_hz <= 0.0) {
    return Fail(source_name,
                std::string("raw ") + name + " samples carry no sample rate; give it (--rate HZ)");
  }
  const std::size_t word = encoding == RawEncoding::kFloat32 ? 4 : 2;
  const std::size_t channels = options.raw_channel_count;
  const std::size_t frame_bytes = word * channels;
  if (bytes.size() % frame_bytes != 0) {
    return Fail(source_name, std::to_string(bytes.size()) + " bytes is not a whole number of " +
                                 std::to_string(channels) + "-channel " + name + " frames (" +
                                 std::to_string(frame_bytes) + " bytes each): truncated?");
  }
  const std::size_t frames = bytes.size() / frame_bytes;
  if (frames == 0) return Fail(source_name, "empty file, no samples");
  if (options.channel >= channels) {
    return Fail(source_name, "channel " + std::to_string(options.channel) +
                                 " requested but frames hold " + std::to_string(channels) +
                                 (channels == 1 ? " channel" : " channels"));
  }

  Recording recording;
  recording.channel_count = channels;
  recording.channel = options.channel;
  recording.sample_rate_hz = options.sample_rate_hz;
  recording.samples.resize(frames);
  const unsigned char* p = Bytes(bytes) + options.channel * word;
  for (std::size_t i = 0; i < frames; ++i, p += frame_bytes) {
    if (encoding == RawEncoding::kFloat32) {
      const double value = DecodeFloat32(p);
      if (!std::isfinite(value)) {
        return Fail(source_name, "sample " + std::to_string(i) + " of channel " +
                                     std::to_string(options.channel) + " is not finite");
      }
      recording.samples[i] = value;
    } else {
      recording.samples[i] = DecodeScaledInt(p, 2);
    }
  }
  char rate[64];
  std::snprintf(rate, sizeof rate, "%.10g Hz", recording.sample_rate_hz);
  recording.name = std::string(source_name);
  recording.source = std::string(source_name) + ": raw little-endian " + name + ", " +
                     std::to_string(channels) + (channels == 1 ? " channel" : " channels") +
                     ", channel " + std::to_string(options.channel) + ", " + rate + ", " +
                     std::to_string(frames) + " frames";
  return recording;
}

Result<Recording> ReadRaw(const std::filesystem::path& path, RawEncoding encoding,
                          const ReadOptions& options) {
  auto bytes = ReadFileBytes(path);
  if (!bytes.ok()) return bytes.status();
  return ParseRaw(*bytes, path.string(), encoding, options);
}

}  // namespace spinward::daemon
