// Writes one channel of samples as a 24-bit integer PCM WAV (the plain 16-byte fmt chunk), full
// scale +-1.0, the way a data recorder with a +-1 V input range would save volts. Used by the demo.
// Samples at or beyond full scale are refused, never clipped quietly: the error names the first.
// Thread-safety: pure function; the file is written whole, then closed.
#pragma once

#include <filesystem>
#include <span>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

Status WriteWavPcm24(const std::filesystem::path& path, std::span<const double> samples,
                     double sample_rate_hz);

}  // namespace spinward::daemon
