// CRC-32 as used by the frame protocol's trailer: the IEEE 802.3 / zlib polynomial 0x04C11DB7 in
// its reflected form 0xEDB88320, initial value and final XOR 0xFFFFFFFF. The chaining convention is
// zlib's: pass the value returned for the bytes so far to continue over the next bytes, so
// Crc32(b, Crc32(a)) == Crc32(a + b).
// Thread-safety: pure function; safe from any thread.
#pragma once

#include <cstdint>
#include <span>

namespace spinward::daemon {

// Returns the CRC-32 of `bytes`, continuing from `previous` (0 for a fresh start).
std::uint32_t Crc32(std::span<const std::uint8_t> bytes, std::uint32_t previous = 0);

}  // namespace spinward::daemon
