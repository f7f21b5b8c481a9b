// Little-endian sample words to doubles, shared by the WAV and raw readers. Decoding is byte by
// byte, so it is the same on any host byte order and needs no alignment. Integer words are scaled
// to
// [-1, 1) full scale: x / 2^(bits - 1) (common practice: full scale is the most negative code).
// Thread-safety: pure functions.
#pragma once

#include <bit>
#include <cstdint>
#include <string_view>

namespace spinward::daemon {

inline std::uint32_t LoadU16(const unsigned char* p) {
  return static_cast<std::uint32_t>(p[0]) | (static_cast<std::uint32_t>(p[1]) << 8);
}

inline std::uint32_t LoadU32(const unsigned char* p) {
  return static_cast<std::uint32_t>(p[0]) | (static_cast<std::uint32_t>(p[1]) << 8) |
         (static_cast<std::uint32_t>(p[2]) << 16) | (static_cast<std::uint32_t>(p[3]) << 24);
}

inline std::uint64_t LoadU64(const unsigned char* p) {
  return static_cast<std::uint64_t>(LoadU32(p)) |
         (static_cast<std::uint64_t>(LoadU32(p + 4)) << 32);
}

// A signed little-endian integer of `bytes` (1..4) bytes, as an int64 with its sign extended.
inline std::int64_t LoadSigned(const unsigned char* p, unsigned bytes) {
  std::uint64_t raw = 0;
  for (unsigned i = 0; i < bytes; ++i) raw |= static_cast<std::uint64_t>(p[i]) << (8 * i);
  const unsigned shift = 64 - 8 * bytes;
  return static_cast<std::int64_t>(raw << shift) >> shift;  // arithmetic shift sign-extends
}

inline double DecodeFloat32(const unsigned char* p) {
  return static_cast<double>(std::bit_cast<float>(LoadU32(p)));
}

inline double DecodeFloat64(const unsigned char* p) { return std::bit_cast<double>(LoadU64(p)); }

// Signed integer of `bytes` bytes scaled to [-1, 1).
inline double DecodeScaledInt(const unsigned char* p, unsigned bytes) {
  const double full_scale = static_cast<double>(std::uint64_t{1} << (8 * bytes - 1));
  return static_cast<double>(LoadSigned(p, bytes)) / full_scale;
}

// Unsigned 8-bit PCM (WAV's one unsigned width): 128 is zero.
inline double DecodeScaledU8(const unsigned char* p) {
  return (static_cast<double>(p[0]) - 128.0) / 128.0;
}

inline const unsigned char* Bytes(std::string_view data) {
  return reinterpret_cast<const unsigned char*>(data.data());
}

}  // namespace spinward::daemon
