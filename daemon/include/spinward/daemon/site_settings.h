// Turns a validated site configuration into what the daemon's parts take: one PointSettings per
// measurement point and one ListenerOptions per listener. The config folder checks the file; this
// is only the mapping.
// Thread-safety: pure functions.
#pragma once

#include <vector>

#include "spinward/config/site_config.h"
#include "spinward/daemon/channel_pipeline.h"
#include "spinward/daemon/network_listener.h"

namespace spinward::daemon {

std::vector<PointSettings> PointSettingsFromSite(const config::SiteConfig& site);
PointSettings PointSettingsFor(const config::SiteConfig& site, const config::PointConfig& point);
std::vector<ListenerOptions> ListenerOptionsFromSite(const config::SiteConfig& site);

}  // namespace spinward::daemon
