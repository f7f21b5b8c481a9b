// Field access goes through explicit little-endian byte loads and stores (no struct overlays, no
// unaligned pointer casts), so the codec is the same on any host and sanitizer-clean on any input.
#include "spinward/daemon/frame_codec.h"

#include <algorithm>
#include <array>
#include <bit>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <limits>
#include <type_traits>

#include "spinward/daemon/crc32.h"

namespace spinward::daemon {
namespace {

constexpr std::array<std::uint8_t, 4> kMagic = {'S', 'P', 'W', 'F'};
constexpr std::uint16_t kFlagEngineeringUnits = 0x0001;
constexpr std::uint16_t kKnownFlags = kFlagEngineeringUnits;

// Byte offsets of the version 1 header (docs/protocol.md, "Byte layout").
constexpr std::size_t kOffVersion = 4;
constexpr std::size_t kOffFlags = 6;
constexpr std::size_t kOffFrameLength = 8;
constexpr std::size_t kOffSampleCount = 12;
constexpr std::size_t kOffSequence = 16;
constexpr std::size_t kOffFirstSampleTime = 24;
constexpr std::size_t kOffSampleRate = 32;
constexpr std::size_t kOffScale = 40;
constexpr std::size_t kOffSampleFormat = 48;
constexpr std::size_t kOffSensorIdLength = 49;
constexpr std::size_t kOffSensorId = kFrameFixedHeaderBytes;

template <typename U>
U LoadLe(const std::uint8_t* p) {
  static_assert(std::is_unsigned_v<U>);
  if constexpr (std::endian::native == std::endian::little) {
    U value;  // one plain load: lets the sample loops vectorize
    std::memcpy(&value, p, sizeof value);
    return value;
  }
  U value = 0;
  for (std::size_t i = 0; i < sizeof(U); ++i)
    value |= static_cast<U>(static_cast<U>(p[i]) << (8 * i));
  return value;
}

template <typename U>
void StoreLe(std::uint8_t* p, U value) {
  static_assert(std::is_unsigned_v<U>);
  for (std::size_t i = 0; i < sizeof(U); ++i) p[i] = static_cast<std::uint8_t>(value >> (8 * i));
}

std::string FormatDouble(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%.17g", value);
  return text;
}

std::string Hex32(std::uint32_t value) {
  char text[16];
  std::snprintf(text, sizeof text, "0x%08X", value);
  return text;
}

FrameError Reject(FrameErrorReason reason, std::string message) {
  return FrameError{reason, std::move(message)};
}

// Whether every possible sample of `format` times `scale` is a finite double. A finite scale can
// still overflow (1e300 * 32767), and an infinite sample would poison every spectrum it enters.
bool ScaleKeepsSamplesFinite(SampleFormat format, double scale) {
  double largest = 32768.0;
  if (format == SampleFormat::kInt32) largest = 2147483648.0;
  if (format == SampleFormat::kFloat32)
    largest = static_cast<double>(std::numeric_limits<float>::max());
  return std::isfinite(largest * scale);
}

template <typename Sample>
constexpr SampleFormat FormatOf() {
  if constexpr (std::is_same_v<Sample, std::int16_t>) return SampleFormat::kInt16;
  if constexpr (std::is_same_v<Sample, std::int32_t>) return SampleFormat::kInt32;
  return SampleFormat::kFloat32;
}

template <typename Sample>
Result<std::vector<std::uint8_t>> EncodeSamples(const FrameMetadata& metadata,
                                                std::span<const Sample> samples) {
  if (Status valid = metadata.Validate(); !valid.ok()) return valid;
  if (samples.empty()) return Error{"samples: a frame carries at least one sample, got 0"};
  if (!ScaleKeepsSamplesFinite(FormatOf<Sample>(), metadata.scale)) {
    return Error{"scale " + FormatDouble(metadata.scale) + ": the largest " +
                 std::string(SampleFormatName(FormatOf<Sample>())) +
                 " sample times it overflows binary64"};
  }
  if constexpr (std::is_same_v<Sample, float>) {
    for (std::size_t i = 0; i < samples.size(); ++i) {
      if (!std::isfinite(samples[i])) {
        return Error{"samples[" + std::to_string(i) + "] " + FormatDouble(samples[i]) +
                     ": float32 samples must be finite"};
      }
    }
  }
  const std::size_t id_bytes = metadata.sensor_id.size();
  constexpr std::size_t kMaxFrame = std::numeric_limits<std::uint32_t>::max();
  const std::size_t room = kMaxFrame - kFrameFixedHeaderBytes - id_bytes - kFrameCrcBytes;
  if (samples.size() > room / sizeof(Sample)) {
    return Error{"samples: " + std::to_string(samples.size()) +
                 " samples do not fit in one frame (frame_length is 32 bits)"};
  }
  const std::size_t total =
      kFrameFixedHeaderBytes + id_bytes + samples.size() * sizeof(Sample) + kFrameCrcBytes;

  std::vector<std::uint8_t> out(total);
  std::uint8_t* p = out.data();
  std::copy(kMagic.begin(), kMagic.end(), p);
  StoreLe<std::uint16_t>(p + kOffVersion, kFrameVersion);
  StoreLe<std::uint16_t>(p + kOffFlags, metadata.scale_unit == ScaleUnit::kEngineering
                                            ? kFlagEngineeringUnits
                                            : std::uint16_t{0});
  StoreLe<std::uint32_t>(p + kOffFrameLength, static_cast<std::uint32_t>(total));
  StoreLe<std::uint32_t>(p + kOffSampleCount, static_cast<std::uint32_t>(samples.size()));
  StoreLe<std::uint64_t>(p + kOffSequence, metadata.sequence);
  StoreLe<std::uint64_t>(p + kOffFirstSampleTime,
                         static_cast<std::uint64_t>(metadata.first_sample_utc_ns));
  StoreLe<std::uint64_t>(p + kOffSampleRate, std::bit_cast<std::uint64_t>(metadata.sample_rate_hz));
  StoreLe<std::uint64_t>(p + kOffScale, std::bit_cast<std::uint64_t>(metadata.scale));
  p[kOffSampleFormat] = static_cast<std::uint8_t>(FormatOf<Sample>());
  p[kOffSensorIdLength] = static_cast<std::uint8_t>(id_bytes);
  std::copy(metadata.sensor_id.begin(), metadata.sensor_id.end(), p + kOffSensorId);

  std::uint8_t* s = p + kOffSensorId + id_bytes;
  for (Sample sample : samples) {
    if constexpr (std::is_same_v<Sample, float>) {
      StoreLe<std::uint32_t>(s, std::bit_cast<std::uint32_t>(sample));
    } else {
      StoreLe<std::make_unsigned_t<Sample>>(s, static_cast<std::make_unsigned_t<Sample>>(sample));
    }
    s += sizeof(Sample);
  }
  StoreLe<std::uint32_t>(s, Crc32(std::span<const std::uint8_t>(p, total - kFrameCrcBytes)));
  return out;
}

// Decodes a buffer whose size equals its declared frame length (already checked >= kMinFrameBytes
// and within the limit). The CRC comes first: a frame damaged in transit is reported as such, and
// any later, field-specific reason means the sender wrote a bad field.
// Float32 words that are NaN or infinite: all exponent bits set.
bool IsNonFiniteFloat32(std::uint32_t word) { return (word & 0x7F800000u) == 0x7F800000u; }

FrameResult DecodeWholeFrame(std::span<const std::uint8_t> frame, std::vector<double> storage) {
  const std::uint8_t* p = frame.data();
  const std::size_t size = frame.size();

  const auto stored_crc = LoadLe<std::uint32_t>(p + size - kFrameCrcBytes);
  const std::uint32_t computed_crc = Crc32(frame.first(size - kFrameCrcBytes));
  if (stored_crc != computed_crc) {
    return Reject(FrameErrorReason::kBadCrc, "crc32 " + Hex32(stored_crc) + " in the trailer, " +
                                                 Hex32(computed_crc) + " computed over the " +
                                                 std::to_string(size - kFrameCrcBytes) +
                                                 " bytes before it");
  }

  const auto flags = LoadLe<std::uint16_t>(p + kOffFlags);
  if ((flags & ~kKnownFlags) != 0) {
    return Reject(
        FrameErrorReason::kReservedFlags, "flags 0x" + [&] {
          char text[8];
          std::snprintf(text, sizeof text, "%04X", static_cast<unsigned>(flags));
          return std::string(text);
        }() + ": only bit 0 (engineering units) is defined in version 1");
  }

  const std::uint8_t format_code = p[kOffSampleFormat];
  const auto format = static_cast<SampleFormat>(format_code);
  const std::size_t sample_bytes = SampleFormatBytes(format);
  if (sample_bytes == 0) {
    return Reject(FrameErrorReason::kUnknownSampleFormat,
                  "sample_format " + std::to_string(format_code) +
                      ": expected 1 (int16), 2 (int32) or 3 (float32)");
  }

  const std::size_t id_bytes = p[kOffSensorIdLength];
  if (kFrameFixedHeaderBytes + id_bytes + kFrameCrcBytes > size) {
    return Reject(FrameErrorReason::kBadSensorId, "sensor_id_length " + std::to_string(id_bytes) +
                                                      " does not fit in frame_length " +
                                                      std::to_string(size));
  }
  const std::string_view id(reinterpret_cast<const char*>(p + kOffSensorId), id_bytes);
  std::string why;
  if (!IsValidSensorId(id, &why)) {
    return Reject(FrameErrorReason::kBadSensorId, "sensor_id: " + why);
  }

  Frame out;
  out.format = format;
  FrameMetadata& m = out.metadata;
  m.sensor_id.assign(id);
  m.sample_rate_hz = std::bit_cast<double>(LoadLe<std::uint64_t>(p + kOffSampleRate));
  if (!(std::isfinite(m.sample_rate_hz) && m.sample_rate_hz > 0.0)) {
    return Reject(FrameErrorReason::kBadSampleRate,
                  "sample_rate_hz " + FormatDouble(m.sample_rate_hz) + ": must be finite and > 0");
  }
  m.scale = std::bit_cast<double>(LoadLe<std::uint64_t>(p + kOffScale));
  if (!(std::isfinite(m.scale) && m.scale > 0.0)) {
    return Reject(FrameErrorReason::kBadScale,
                  "scale " + FormatDouble(m.scale) + ": must be finite and > 0");
  }
  if (!ScaleKeepsSamplesFinite(format, m.scale)) {
    return Reject(FrameErrorReason::kBadScale, "scale " + FormatDouble(m.scale) + ": the largest " +
                                                   std::string(SampleFormatName(format)) +
                                                   " sample times it overflows binary64");
  }
  m.scale_unit = (flags & kFlagEngineeringUnits) ? ScaleUnit::kEngineering : ScaleUnit::kVolts;
  m.sequence = LoadLe<std::uint64_t>(p + kOffSequence);
  m.first_sample_utc_ns = static_cast<std::int64_t>(LoadLe<std::uint64_t>(p + kOffFirstSampleTime));

  const std::uint32_t count = LoadLe<std::uint32_t>(p + kOffSampleCount);
  const std::size_t payload = size - kFrameFixedHeaderBytes - id_bytes - kFrameCrcBytes;
  // 64-bit product: count (< 2^32) times 4 cannot overflow size_t on the 64-bit hosts we build on.
  if (count == 0 || static_cast<std::uint64_t>(count) * sample_bytes != payload) {
    return Reject(
        FrameErrorReason::kBadSampleCount,
        "sample_count " + std::to_string(count) + " of " + std::string(SampleFormatName(format)) +
            " needs " + std::to_string(static_cast<std::uint64_t>(count) * sample_bytes) +
            " bytes of samples, frame_length " + std::to_string(size) + " leaves " +
            std::to_string(payload) + (count == 0 ? " (and at least one is required)" : ""));
  }

  // Into the caller's (recycled) storage. Plain indexed loops without early exits vectorize;
  // float32 words are first screened for NaN and infinity as integers.
  const std::uint8_t* s = p + kOffSensorId + id_bytes;
  const double scale = m.scale;
  if (format == SampleFormat::kFloat32) {
    bool any_non_finite = false;
    for (std::uint32_t i = 0; i < count; ++i) {
      any_non_finite |= IsNonFiniteFloat32(LoadLe<std::uint32_t>(s + 4 * std::size_t{i}));
    }
    if (any_non_finite) {
      std::uint32_t i = 0;
      while (!IsNonFiniteFloat32(LoadLe<std::uint32_t>(s + 4 * std::size_t{i}))) ++i;
      const float value = std::bit_cast<float>(LoadLe<std::uint32_t>(s + 4 * std::size_t{i}));
      return Reject(FrameErrorReason::kBadSample, "samples[" + std::to_string(i) + "] " +
                                                      FormatDouble(value) +
                                                      ": float32 samples must be finite");
    }
  }
  out.samples = std::move(storage);
  out.samples.resize(count);  // a recycled buffer of the same size is not zero-filled again
  double* const samples = out.samples.data();
  switch (format) {
    case SampleFormat::kInt16:
      for (std::uint32_t i = 0; i < count; ++i) {
        samples[i] =
            static_cast<std::int16_t>(LoadLe<std::uint16_t>(s + 2 * std::size_t{i})) * scale;
      }
      break;
    case SampleFormat::kInt32:
      for (std::uint32_t i = 0; i < count; ++i) {
        samples[i] =
            static_cast<std::int32_t>(LoadLe<std::uint32_t>(s + 4 * std::size_t{i})) * scale;
      }
      break;
    case SampleFormat::kFloat32:
      for (std::uint32_t i = 0; i < count; ++i) {
        const float value = std::bit_cast<float>(LoadLe<std::uint32_t>(s + 4 * std::size_t{i}));
        samples[i] = static_cast<double>(value) * scale;
      }
      break;
  }
  return out;
}

}  // namespace

std::string_view FrameErrorReasonName(FrameErrorReason reason) {
  switch (reason) {
    case FrameErrorReason::kTruncated:
      return "truncated";
    case FrameErrorReason::kBadMagic:
      return "bad_magic";
    case FrameErrorReason::kUnsupportedVersion:
      return "unsupported_version";
    case FrameErrorReason::kBadLength:
      return "bad_length";
    case FrameErrorReason::kOversized:
      return "oversized";
    case FrameErrorReason::kBadCrc:
      return "bad_crc";
    case FrameErrorReason::kReservedFlags:
      return "reserved_flags";
    case FrameErrorReason::kUnknownSampleFormat:
      return "unknown_sample_format";
    case FrameErrorReason::kBadSensorId:
      return "bad_sensor_id";
    case FrameErrorReason::kBadSampleRate:
      return "bad_sample_rate";
    case FrameErrorReason::kBadScale:
      return "bad_scale";
    case FrameErrorReason::kBadSampleCount:
      return "bad_sample_count";
    case FrameErrorReason::kBadSample:
      return "bad_sample";
  }
  return "unknown";
}

Status DecodeLimits::Validate() const {
  if (max_frame_bytes < kMinFrameBytes) {
    return Status::Fail("max_frame_bytes " + std::to_string(max_frame_bytes) +
                        ": must be at least " + std::to_string(kMinFrameBytes) +
                        " (the smallest frame)");
  }
  return Status::Ok();
}

Status FrameResult::status() const {
  if (ok()) return Status::Ok();
  return Status::Fail("frame rejected (" + std::string(FrameErrorReasonName(error().reason)) +
                      "): " + error().message);
}

Result<std::vector<std::uint8_t>> EncodeFrame(const FrameMetadata& metadata,
                                              std::span<const std::int16_t> samples) {
  return EncodeSamples(metadata, samples);
}

Result<std::vector<std::uint8_t>> EncodeFrame(const FrameMetadata& metadata,
                                              std::span<const std::int32_t> samples) {
  return EncodeSamples(metadata, samples);
}

Result<std::vector<std::uint8_t>> EncodeFrame(const FrameMetadata& metadata,
                                              std::span<const float> samples) {
  return EncodeSamples(metadata, samples);
}

std::variant<std::size_t, FrameError> DeclaredFrameLength(std::span<const std::uint8_t> prefix,
                                                          const DecodeLimits& limits) {
  if (prefix.size() < kFramePrefixBytes) {
    return Reject(FrameErrorReason::kTruncated,
                  std::to_string(prefix.size()) + " bytes, fewer than the " +
                      std::to_string(kFramePrefixBytes) + "-byte frame prefix");
  }
  const std::uint8_t* p = prefix.data();
  if (!std::equal(kMagic.begin(), kMagic.end(), p)) {
    char text[64];
    std::snprintf(text, sizeof text, "magic %02X %02X %02X %02X", p[0], p[1], p[2], p[3]);
    return Reject(FrameErrorReason::kBadMagic,
                  std::string(text) + ", expected 53 50 57 46 (\"SPWF\")");
  }
  const auto version = LoadLe<std::uint16_t>(p + kOffVersion);
  if (version != kFrameVersion) {
    return Reject(FrameErrorReason::kUnsupportedVersion, "version " + std::to_string(version) +
                                                             ", this receiver reads version " +
                                                             std::to_string(kFrameVersion));
  }
  const std::size_t length = LoadLe<std::uint32_t>(p + kOffFrameLength);
  if (length < kMinFrameBytes) {
    return Reject(FrameErrorReason::kBadLength, "frame_length " + std::to_string(length) +
                                                    ", below the minimum " +
                                                    std::to_string(kMinFrameBytes));
  }
  if (length > limits.max_frame_bytes) {
    return Reject(FrameErrorReason::kOversized, "frame_length " + std::to_string(length) +
                                                    ", above this receiver's limit " +
                                                    std::to_string(limits.max_frame_bytes));
  }
  return length;
}

FrameResult DecodeFrame(std::span<const std::uint8_t> bytes, const DecodeLimits& limits,
                        std::vector<double> storage) {
  auto declared = DeclaredFrameLength(bytes, limits);
  if (auto* error = std::get_if<FrameError>(&declared)) return std::move(*error);
  const std::size_t length = std::get<std::size_t>(declared);
  if (bytes.size() < length) {
    return Reject(FrameErrorReason::kTruncated, std::to_string(bytes.size()) +
                                                    " bytes of a frame whose frame_length is " +
                                                    std::to_string(length));
  }
  if (bytes.size() > length) {
    return Reject(FrameErrorReason::kBadLength, "frame_length " + std::to_string(length) +
                                                    " but the datagram holds " +
                                                    std::to_string(bytes.size()) + " bytes");
  }
  return DecodeWholeFrame(bytes, std::move(storage));
}

FrameAssembler::FrameAssembler(DecodeLimits limits)
    : limits_(limits.Validate().ok() ? limits : DecodeLimits{}) {}

void FrameAssembler::UseSpareStorage(std::function<std::vector<double>()> spare) {
  spare_ = std::move(spare);
}

std::vector<double> FrameAssembler::SpareStorage() const {
  return spare_ ? spare_() : std::vector<double>();
}

std::optional<FrameError> FrameAssembler::Fail(FrameError error) {
  error_ = std::move(error);
  buffer_.clear();
  buffer_.shrink_to_fit();
  expected_ = 0;
  return error_;
}

std::optional<FrameError> FrameAssembler::Feed(std::span<const std::uint8_t> chunk,
                                               std::vector<Frame>* frames) {
  if (error_) return error_;
  std::size_t pos = 0;
  while (pos < chunk.size()) {
    const std::span<const std::uint8_t> rest = chunk.subspan(pos);
    if (buffer_.empty()) {
      // Between frames: decode straight from the chunk when a whole frame is there.
      if (rest.size() < kFramePrefixBytes) {
        buffer_.assign(rest.begin(), rest.end());
        bytes_consumed_ += rest.size();
        break;
      }
      auto declared = DeclaredFrameLength(rest, limits_);
      if (auto* error = std::get_if<FrameError>(&declared)) return Fail(std::move(*error));
      const std::size_t length = std::get<std::size_t>(declared);
      if (rest.size() < length) {
        buffer_.reserve(length);
        buffer_.assign(rest.begin(), rest.end());
        expected_ = length;
        bytes_consumed_ += rest.size();
        break;
      }
      FrameResult result = DecodeWholeFrame(rest.first(length), SpareStorage());
      if (!result.ok()) return Fail(result.error());
      frames->push_back(std::move(result).value());
      pos += length;
      bytes_consumed_ += length;
      continue;
    }
    // A frame split across chunks: top up the prefix first, then the declared length.
    if (expected_ == 0) {
      const std::size_t take = std::min(kFramePrefixBytes - buffer_.size(), rest.size());
      buffer_.insert(buffer_.end(), rest.begin(), rest.begin() + static_cast<std::ptrdiff_t>(take));
      pos += take;
      bytes_consumed_ += take;
      if (buffer_.size() < kFramePrefixBytes) break;
      auto declared = DeclaredFrameLength(buffer_, limits_);
      if (auto* error = std::get_if<FrameError>(&declared)) return Fail(std::move(*error));
      expected_ = std::get<std::size_t>(declared);
      buffer_.reserve(expected_);
      continue;
    }
    const std::size_t take = std::min(expected_ - buffer_.size(), rest.size());
    buffer_.insert(buffer_.end(), rest.begin(), rest.begin() + static_cast<std::ptrdiff_t>(take));
    pos += take;
    bytes_consumed_ += take;
    if (buffer_.size() < expected_) break;
    FrameResult result = DecodeWholeFrame(buffer_, SpareStorage());
    if (!result.ok()) return Fail(result.error());
    frames->push_back(std::move(result).value());
    buffer_.clear();
    expected_ = 0;
  }
  return std::nullopt;
}

}  // namespace spinward::daemon
