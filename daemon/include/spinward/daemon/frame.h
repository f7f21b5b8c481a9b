// One block of accelerometer samples as an acquisition box sends it to Spinward (see
// docs/protocol.md): who measured it, when, how fast, in what sample format, and the samples.
// A decoded Frame owns its samples, already multiplied by the scale factor, so downstream code
// never sees raw ADC counts. FrameMetadata is what a sender fills in to encode a frame.
// Thread-safety: plain values; safe to copy between threads.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

// How the samples travel on the wire. The numeric values are the wire codes; 0 is left unused so a
// zero-filled buffer never decodes as a valid format.
enum class SampleFormat : std::uint8_t {
  kInt16 = 1,    // two's complement, little-endian
  kInt32 = 2,    // two's complement, little-endian
  kFloat32 = 3,  // IEEE 754 binary32, little-endian
};

// Bytes per sample on the wire, or 0 for a code that is not a SampleFormat.
std::size_t SampleFormatBytes(SampleFormat format);
std::string_view SampleFormatName(SampleFormat format);  // "int16", "int32", "float32", "unknown"

// What sample * scale is measured in. Volts: the box sends the sensor's output voltage and the
// daemon applies the sensor sensitivity from the site config. Engineering units: the box already
// applied the sensitivity (m/s^2, or whatever the site config declares for that point).
enum class ScaleUnit : std::uint8_t {
  kVolts = 0,
  kEngineering = 1,
};

std::string_view ScaleUnitName(ScaleUnit unit);  // "volts", "engineering"

// Protocol limits that hold for every frame (docs/protocol.md, "Limits").
inline constexpr std::size_t kMinSensorIdBytes = 1;
inline constexpr std::size_t kMaxSensorIdBytes = 64;

struct FrameMetadata {
  std::string sensor_id;                 // UTF-8, 1..64 bytes, no control characters
  double sample_rate_hz = 0.0;           // finite, > 0
  std::int64_t first_sample_utc_ns = 0;  // UTC time of the first sample, ns since the Unix epoch
  std::uint64_t sequence = 0;  // per sensor id, +1 per frame; a jump means frames were lost
  double scale = 1.0;          // finite, > 0: sample value = wire sample * scale
  ScaleUnit scale_unit = ScaleUnit::kVolts;

  // Names the first field that the protocol does not allow, with its value.
  Status Validate() const;
};

struct Frame {
  FrameMetadata metadata;
  SampleFormat format = SampleFormat::kInt16;  // as it travelled; samples are scaled already
  std::vector<double> samples;                 // wire sample * metadata.scale
};

// Whether `id` is an acceptable sensor id: 1..64 bytes of well-formed UTF-8 (no overlong forms, no
// surrogates) without control characters (U+0000..U+001F, U+007F). On failure, `why` says what.
bool IsValidSensorId(std::string_view id, std::string* why = nullptr);

}  // namespace spinward::daemon
