// zlib's crc32_z: the same polynomial and chaining convention, and several times faster than a
// byte-at-a-time table (it walks words and, where the CPU has them, uses carry-less multiplies).
// The table version cost 16 % of the daemon's CPU time under load (bench/run_end_to_end.py, perf).
#include "spinward/daemon/crc32.h"

#include <zlib.h>

namespace spinward::daemon {

std::uint32_t Crc32(std::span<const std::uint8_t> bytes, std::uint32_t previous) {
  return static_cast<std::uint32_t>(crc32_z(previous, bytes.data(), bytes.size()));
}

}  // namespace spinward::daemon
