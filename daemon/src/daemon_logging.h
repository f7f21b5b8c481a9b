// spdlog set-up shared by the long-running commands: standard error, colour only on a terminal,
// and an optional log file.
#pragma once

#include <memory>
#include <string>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

// Level: trace, debug, info, warn, error. File: empty for standard error only.
Status SetUpLogging(const std::string& level, const std::string& file);
// Writes one line at the given level ("info", "warn", "error", "debug").
void LogLine(const std::string& level, const std::string& message);

}  // namespace spinward::daemon
