// Renders a HealthSnapshot in the Prometheus text exposition format, version 0.0.4: one HELP and
// one TYPE line per family, counters named *_total, label values escaped (backslash, double
// quote, newline). Pure function of the snapshot; safe from any thread.
#pragma once

#include <string>

#include "spinward/daemon/health_server.h"

namespace spinward::daemon {

inline constexpr char kMetricsContentType[] = "text/plain; version=0.0.4; charset=utf-8";

std::string RenderMetricsText(const HealthSnapshot& snapshot);

}  // namespace spinward::daemon
