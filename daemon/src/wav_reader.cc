#include "spinward/daemon/wav_reader.h"

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <optional>
#include <string>
#include <utility>

#include "sample_decoding.h"

namespace spinward::daemon {
namespace {

constexpr std::uint32_t kFormatPcm = 0x0001;
constexpr std::uint32_t kFormatIeeeFloat = 0x0003;
constexpr std::uint32_t kFormatExtensible = 0xFFFE;
// The 14 bytes after the format code in an extensible sub-format GUID (KSDATAFORMAT_SUBTYPE_*).
constexpr unsigned char kGuidTail[14] = {0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80,
                                         0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71};

struct FmtChunk {
  std::uint32_t format_tag = 0;  // after resolving WAVE_FORMAT_EXTENSIBLE
  bool extensible = false;
  std::uint32_t channels = 0;
  std::uint32_t sample_rate = 0;
  std::uint32_t block_align = 0;
  std::uint32_t container_bits = 0;
  std::uint32_t valid_bits = 0;
};

std::string FormatTagName(std::uint32_t tag) {
  switch (tag) {
    case 0x0002:
      return "format tag 2 (Microsoft ADPCM)";
    case 0x0006:
      return "format tag 6 (A-law)";
    case 0x0007:
      return "format tag 7 (mu-law)";
    case 0x0011:
      return "format tag 17 (IMA ADPCM)";
    case 0x0055:
      return "format tag 85 (MPEG layer 3)";
    default:
      return "format tag " + std::to_string(tag);
  }
}

Error Fail(std::string_view source, const std::string& problem) {
  return Error{std::string(source) + ": " + problem};
}

Result<FmtChunk> ParseFmt(const unsigned char* p, std::uint32_t size, std::string_view source) {
  if (size < 16) {
    return Fail(source,
                "fmt chunk is " + std::to_string(size) + " bytes, fewer than the 16 required");
  }
  FmtChunk fmt;
  fmt.format_tag = LoadU16(p);
  fmt.channels = LoadU16(p + 2);
  fmt.sample_rate = LoadU32(p + 4);
  fmt.block_align = LoadU16(p + 12);
  fmt.container_bits = LoadU16(p + 14);
  fmt.valid_bits = fmt.container_bits;
  if (fmt.format_tag == kFormatExtensible) {
    if (size < 40) {
      return Fail(source, "WAVE_FORMAT_EXTENSIBLE fmt chunk is " + std::to_string(size) +
                              " bytes, fewer than the 40 required");
    }
    fmt.extensible = true;
    const std::uint32_t valid = LoadU16(p + 18);
    if (valid != 0) fmt.valid_bits = valid;  // 0 means "same as the container" in practice
    const unsigned char* guid = p + 24;
    for (int i = 0; i < 14; ++i) {
      if (guid[2 + i] != kGuidTail[i]) {
        return Fail(source,
                    "WAVE_FORMAT_EXTENSIBLE with an unknown sub-format GUID (not PCM or "
                    "IEEE float)");
      }
    }
    fmt.format_tag = LoadU16(guid);
  }
  if (fmt.format_tag != kFormatPcm && fmt.format_tag != kFormatIeeeFloat) {
    return Fail(source, "unsupported WAV encoding: " + FormatTagName(fmt.format_tag) +
                            "; only integer PCM and IEEE float are read");
  }
  if (fmt.channels == 0) return Fail(source, "fmt chunk declares 0 channels");
  if (fmt.sample_rate == 0) return Fail(source, "fmt chunk declares a sample rate of 0 Hz");
  const bool pcm = fmt.format_tag == kFormatPcm;
  const std::uint32_t bits = fmt.container_bits;
  const bool supported =
      pcm ? (bits == 8 || bits == 16 || bits == 24 || bits == 32) : (bits == 32 || bits == 64);
  if (!supported) {
    return Fail(source, "unsupported bit depth: " + std::to_string(bits) + "-bit " +
                            (pcm ? std::string("integer PCM (8, 16, 24 or 32 are read)")
                                 : std::string("IEEE float (32 or 64 are read)")));
  }
  if (fmt.valid_bits > bits) {
    return Fail(source, "valid bits " + std::to_string(fmt.valid_bits) +
                            " exceed the container's " + std::to_string(bits));
  }
  const std::uint32_t expected_align = fmt.channels * (bits / 8);
  if (fmt.block_align != expected_align) {
    return Fail(source, "block align " + std::to_string(fmt.block_align) +
                            " bytes does not match " + std::to_string(fmt.channels) +
                            " channels of " + std::to_string(bits) + " bits (" +
                            std::to_string(expected_align) + " bytes)");
  }
  return fmt;
}

std::string Describe(const FmtChunk& fmt) {
  std::string text = "WAV ";
  text += fmt.format_tag == kFormatPcm ? "PCM " : "float ";
  text += std::to_string(fmt.valid_bits) + "-bit";
  if (fmt.valid_bits != fmt.container_bits) {
    text += " in " + std::to_string(fmt.container_bits) + "-bit containers";
  }
  if (fmt.extensible) text += " (extensible)";
  return text;
}

std::string FormatHz(double hz) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.10g Hz", hz);
  return buffer;
}

}  // namespace

Result<Recording> ParseWav(std::string_view bytes, std::string_view source_name,
                           const ReadOptions& options) {
  if (Status valid = options.Validate(); !valid.ok()) return Fail(source_name, valid.message());
  const std::size_t size = bytes.size();
  const unsigned char* data = Bytes(bytes);
  if (size < 12) {
    return Fail(source_name,
                "only " + std::to_string(size) + " bytes, too short for a WAV header (12 bytes)");
  }
  if (bytes.substr(0, 4) == "RF64") return Fail(source_name, "RF64 (64-bit WAV) is not supported");
  if (bytes.substr(0, 4) != "RIFF" || bytes.substr(8, 4) != "WAVE") {
    return Fail(source_name, "not a WAV file (no RIFF/WAVE header)");
  }

  std::optional<FmtChunk> fmt;
  std::size_t data_offset = 0;
  std::size_t data_size = 0;
  bool have_data = false;
  std::size_t offset = 12;
  while (offset + 8 <= size) {
    const std::string_view id = bytes.substr(offset, 4);
    const std::uint32_t chunk_size = LoadU32(data + offset + 4);
    const std::size_t body = offset + 8;
    const std::size_t remaining = size - body;
    if (id == "data") {
      if (!fmt) return Fail(source_name, "data chunk comes before the fmt chunk");
      if (chunk_size > remaining) {
        return Fail(source_name, "data chunk declares " + std::to_string(chunk_size) +
                                     " bytes but only " + std::to_string(remaining) +
                                     " follow (truncated)");
      }
      data_offset = body;
      data_size = chunk_size;
      have_data = true;
      break;  // chunks after the samples (LIST, id3) carry nothing we use
    }
    if (chunk_size > remaining) {
      return Fail(source_name, "chunk '" + std::string(id) + "' at byte " + std::to_string(offset) +
                                   " declares " + std::to_string(chunk_size) + " bytes but only " +
                                   std::to_string(remaining) + " follow (truncated or damaged)");
    }
    if (id == "fmt ") {
      if (fmt) return Fail(source_name, "more than one fmt chunk");
      auto parsed = ParseFmt(data + body, chunk_size, source_name);
      if (!parsed.ok()) return parsed.status();
      fmt = *parsed;
    }
    offset = body + chunk_size + (chunk_size & 1u);  // chunks are padded to even length
  }
  if (!fmt) return Fail(source_name, "no fmt chunk");
  if (!have_data) return Fail(source_name, "no data chunk");

  const std::size_t frame_bytes = fmt->block_align;
  if (data_size % frame_bytes != 0) {
    return Fail(source_name, "data chunk of " + std::to_string(data_size) +
                                 " bytes is not a whole number of " + std::to_string(frame_bytes) +
                                 "-byte frames (truncated)");
  }
  const std::size_t frames = data_size / frame_bytes;
  if (frames == 0) return Fail(source_name, "data chunk holds no samples");
  if (options.channel >= fmt->channels) {
    return Fail(source_name, "channel " + std::to_string(options.channel) +
                                 " requested but the file has " + std::to_string(fmt->channels) +
                                 (fmt->channels == 1
                                      ? " channel (0)"
                                      : " channels (0-" + std::to_string(fmt->channels - 1) + ")"));
  }

  Recording recording;
  recording.channel_count = fmt->channels;
  recording.channel = options.channel;
  recording.sample_rate_hz =
      options.sample_rate_hz > 0.0 ? options.sample_rate_hz : static_cast<double>(fmt->sample_rate);
  recording.samples.resize(frames);
  const unsigned word = fmt->container_bits / 8;
  const unsigned char* p = data + data_offset + options.channel * word;
  const bool is_float = fmt->format_tag == kFormatIeeeFloat;
  for (std::size_t i = 0; i < frames; ++i, p += frame_bytes) {
    double value = 0.0;
    if (is_float) {
      value = word == 4 ? DecodeFloat32(p) : DecodeFloat64(p);
      if (!std::isfinite(value)) {
        return Fail(source_name, "sample " + std::to_string(i) + " of channel " +
                                     std::to_string(options.channel) + " is not finite");
      }
    } else {
      value = word == 1 ? DecodeScaledU8(p) : DecodeScaledInt(p, word);
    }
    recording.samples[i] = value;
  }

  recording.name = std::string(source_name);
  recording.source = std::string(source_name) + ": " + Describe(*fmt) + ", " +
                     std::to_string(fmt->channels) +
                     (fmt->channels == 1 ? " channel" : " channels") + ", channel " +
                     std::to_string(options.channel) + ", " + FormatHz(recording.sample_rate_hz) +
                     ", " + std::to_string(frames) + " frames";
  if (options.sample_rate_hz > 0.0 && options.sample_rate_hz != fmt->sample_rate) {
    recording.source += " (rate given; header says " + std::to_string(fmt->sample_rate) + " Hz)";
  }
  return recording;
}

Result<Recording> ReadWav(const std::filesystem::path& path, const ReadOptions& options) {
  auto bytes = ReadFileBytes(path);
  if (!bytes.ok()) return bytes.status();
  return ParseWav(*bytes, path.string(), options);
}

}  // namespace spinward::daemon
