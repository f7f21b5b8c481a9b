// Raw sample files: headerless little-endian float32 or int16, ReadOptions::raw_channel_count
// channels interleaved per frame. Nothing in the file says its rate, so ReadOptions::sample_rate_hz
// is required. int16 is scaled to [-1, 1) full scale (x / 32768); float32 is taken as it is.
// A length that is not a whole number of frames is reported (a cut-off copy), not rounded down.
// Thread-safety: pure functions.
#pragma once

#include <filesystem>
#include <string_view>

#include "spinward/daemon/recording_reader.h"

namespace spinward::daemon {

enum class RawEncoding { kFloat32, kInt16 };

Result<Recording> ParseRaw(std::string_view bytes, std::string_view source_name,
                           RawEncoding encoding, const ReadOptions& options);
Result<Recording> ReadRaw(const std::filesystem::path& path, RawEncoding encoding,
                          const ReadOptions& options);

}  // namespace spinward::daemon
