// Encoding and decoding of the binary frame protocol (docs/protocol.md, version 1): EncodeFrame
// writes one frame, DecodeFrame reads one frame from a UDP datagram or any buffer holding exactly
// one frame, and FrameAssembler cuts a TCP byte stream into frames. Decoding never trusts a field
// before the bytes it needs are present and the CRC has matched, and never allocates more than the
// caller's limit, so hostile input costs at most one frame's worth of memory.
// Every rejection carries a FrameErrorReason (for drop counters) and a message that names the field
// and its value (for the log).
// Thread-safety: the free functions are pure and safe from any thread; a FrameAssembler belongs to
// one connection and is not safe to share between threads without a lock.
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <utility>
#include <variant>
#include <vector>

#include "spinward/daemon/frame.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

inline constexpr std::uint16_t kFrameVersion = 1;
// The first bytes of every version: magic, version, flags, frame length. A stream reader needs
// these, and only these, to know how many bytes the frame takes.
inline constexpr std::size_t kFramePrefixBytes = 12;
// Fixed header size before the sensor id (version 1).
inline constexpr std::size_t kFrameFixedHeaderBytes = 50;
inline constexpr std::size_t kFrameCrcBytes = 4;
// The smallest well-formed frame: fixed header, a 1-byte sensor id, one int16 sample, the CRC.
inline constexpr std::size_t kMinFrameBytes = kFrameFixedHeaderBytes + 1 + 2 + kFrameCrcBytes;

// Why a frame was rejected. Stable names (FrameErrorReasonName) are meant for counters and logs.
enum class FrameErrorReason : std::uint8_t {
  kTruncated,            // fewer bytes than the prefix or than the declared frame length
  kBadMagic,             // the first 4 bytes are not "SPWF"
  kUnsupportedVersion,   // a version this decoder does not read
  kBadLength,            // declared length below the minimum, or bytes after the declared end
  kOversized,            // declared length above the receiver's limit
  kBadCrc,               // CRC-32 trailer does not match the bytes before it
  kReservedFlags,        // a flag bit that version 1 does not define is set
  kUnknownSampleFormat,  // sample format code not 1, 2 or 3
  kBadSensorId,          // length 0 or > 64, not UTF-8, or control characters
  kBadSampleRate,        // <= 0, NaN or infinite
  kBadScale,             // <= 0, NaN or infinite
  kBadSampleCount,       // zero, or count * sample size disagrees with the frame length
  kBadSample,            // a float32 sample that is NaN or infinite
};
inline constexpr std::size_t kFrameErrorReasonCount = 13;

std::string_view FrameErrorReasonName(FrameErrorReason reason);  // e.g. "bad_crc"

struct FrameError {
  FrameErrorReason reason;
  std::string message;  // one line: the field, its value, what was expected
};

struct DecodeLimits {
  // Largest frame the receiver accepts, in bytes, CRC included. The default fits 64 Ki float32
  // samples with room to spare; a UDP datagram cannot exceed 65507 bytes anyway.
  std::size_t max_frame_bytes = std::size_t{1} << 20;

  Status Validate() const;  // max_frame_bytes must be >= kMinFrameBytes
};

// Either a decoded frame or the reason it was rejected.
class [[nodiscard]] FrameResult {
 public:
  FrameResult(Frame frame) : value_(std::move(frame)) {}       // NOLINT: implicit on purpose
  FrameResult(FrameError error) : value_(std::move(error)) {}  // NOLINT: implicit on purpose

  bool ok() const { return std::holds_alternative<Frame>(value_); }
  explicit operator bool() const { return ok(); }
  const Frame& value() const& { return std::get<Frame>(value_); }
  Frame&& value() && { return std::get<Frame>(std::move(value_)); }
  const FrameError& error() const { return std::get<FrameError>(value_); }
  // For callers outside the daemon folder: the message prefixed with the reason name.
  Status status() const;

 private:
  std::variant<Frame, FrameError> value_;
};

// Encodes one frame with the given samples (raw wire values; the receiver multiplies them by
// metadata.scale). Fails if the metadata is invalid, there are no samples, a float32 sample is not
// finite, or the frame would exceed 2^32 - 1 bytes.
Result<std::vector<std::uint8_t>> EncodeFrame(const FrameMetadata& metadata,
                                              std::span<const std::int16_t> samples);
Result<std::vector<std::uint8_t>> EncodeFrame(const FrameMetadata& metadata,
                                              std::span<const std::int32_t> samples);
Result<std::vector<std::uint8_t>> EncodeFrame(const FrameMetadata& metadata,
                                              std::span<const float> samples);

// Decodes `bytes`, which must hold exactly one frame (a UDP datagram): fewer bytes than declared is
// kTruncated, more is kBadLength. Checks run in the order of docs/protocol.md, "Receiver checks".
// The samples are decoded into `storage` (resized and overwritten; its memory reused, see
// SampleBufferPool).
FrameResult DecodeFrame(std::span<const std::uint8_t> bytes, const DecodeLimits& limits = {},
                        std::vector<double> storage = {});

// Reads the 12-byte prefix and returns the declared frame length after checking magic, version,
// minimum length and the limit. `prefix` must hold at least kFramePrefixBytes bytes.
std::variant<std::size_t, FrameError> DeclaredFrameLength(std::span<const std::uint8_t> prefix,
                                                          const DecodeLimits& limits);

// Cuts a TCP byte stream into frames. Feed it chunks of any size as they arrive; whole frames
// inside a chunk are decoded in place, and only the bytes of a frame split across chunks are
// buffered, so the buffer never holds more than one frame, and never more than
// limits.max_frame_bytes: an oversized declared length is rejected as soon as the 12-byte prefix is
// in. After the first error the stream has no trustworthy frame boundary left, so the assembler
// stays failed (every later Feed returns the same error) and the caller must close the connection.
class FrameAssembler {
 public:
  // `limits` must pass Validate(); an invalid one is replaced by the defaults.
  explicit FrameAssembler(DecodeLimits limits = {});

  // Appends every frame completed by `chunk` to `*frames`, in stream order, even if a later frame
  // in the same chunk fails. Returns the error that ended the stream, if any.
  [[nodiscard]] std::optional<FrameError> Feed(std::span<const std::uint8_t> chunk,
                                               std::vector<Frame>* frames);

  // Where decoded samples go: each frame's samples are decoded into a vector `spare` returns
  // (a recycled buffer, or an empty vector); without one, into a new vector.
  void UseSpareStorage(std::function<std::vector<double>()> spare);

  bool failed() const { return error_.has_value(); }
  // Bytes held for the frame in progress (0 between frames).
  std::size_t buffered_bytes() const { return buffer_.size(); }
  // Total bytes accepted into frames or the pending buffer since construction.
  std::uint64_t bytes_consumed() const { return bytes_consumed_; }

 private:
  std::optional<FrameError> Fail(FrameError error);
  std::vector<double> SpareStorage() const;

  DecodeLimits limits_;
  std::vector<std::uint8_t> buffer_;  // the frame in progress, at most limits_.max_frame_bytes
  std::size_t expected_ = 0;          // its declared length, once the prefix is in; else 0
  std::uint64_t bytes_consumed_ = 0;
  std::optional<FrameError> error_;
  std::function<std::vector<double>()> spare_;
};

}  // namespace spinward::daemon
