// The demo's close-up of one machine: a recording of pump P-101's drive-end bearing as it runs at
// the end of the demo day, written as a 24-bit WAV, analyzed like `spinward analyze` (spectrum CSV
// and analysis JSON beside it) and summarised: overall velocity, bearing band, strongest lines.
#pragma once

#include <filesystem>

#include "demo_signal.h"

namespace spinward::daemon {

// Returns 0, or 1 after printing the problem.
int RecordingCloseUp(const std::filesystem::path& dir, double seconds, const PumpSignalSpec& spec);

}  // namespace spinward::daemon
