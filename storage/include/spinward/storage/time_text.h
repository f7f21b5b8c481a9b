// Time as people type it on the command line and read it in reports: ISO 8601 UTC instants
// ("2026-03-02T10:00:00Z", "2026-03-02T10:00Z", "2026-03-02", optional fractional seconds) and
// times relative to now ("24h", "7d", "30m", "90s", "2w" mean that long before now; "now").
// Stored times are UTC nanoseconds since the Unix epoch.
// Thread-safety: pure functions.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

#include "spinward/estimators/result.h"

namespace spinward::storage {

// Parses `text` as above; `now_ns` anchors relative times. Errors name the text and the forms
// accepted.
Result<std::int64_t> ParseTimeArgument(std::string_view text, std::int64_t now_ns);

// "2026-03-02T10:00:00Z"; milliseconds are added ("...:00.250Z") when not whole seconds.
std::string FormatIsoUtc(std::int64_t ns);

// The system's wall clock as UTC ns since the epoch.
std::int64_t WallClockNowNs();

}  // namespace spinward::storage
