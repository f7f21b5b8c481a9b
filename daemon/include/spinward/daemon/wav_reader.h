// WAV (RIFF/WAVE) decoding: integer PCM of 8, 16, 24 or 32 bits, IEEE float of 32 or 64 bits, in
// the plain format or WAVE_FORMAT_EXTENSIBLE (whose valid-bits field may be narrower than the
// container: the sample is left-justified, so it is scaled by the container's width).
// Integer samples are scaled to [-1, 1) full scale (x / 2^(bits-1); 8-bit is unsigned, offset 128);
// float samples are taken as they are. The sample rate comes from the fmt chunk.
//
// The chunk walk trusts no declared size: every chunk must fit inside the bytes actually present,
// so a damaged header cannot make the reader allocate or read beyond the file. A data chunk that
// declares more than is there is reported as truncated rather than silently shortened.
// RIFF's own size field is not checked (many writers leave it wrong when a recording is cut short).
// Thread-safety: pure functions.
#pragma once

#include <filesystem>
#include <string_view>

#include "spinward/daemon/recording_reader.h"

namespace spinward::daemon {

// bytes: the whole file; source_name: what errors and the description call it (usually the path).
Result<Recording> ParseWav(std::string_view bytes, std::string_view source_name,
                           const ReadOptions& options);
Result<Recording> ReadWav(const std::filesystem::path& path, const ReadOptions& options);

}  // namespace spinward::daemon
