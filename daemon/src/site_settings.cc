#include "spinward/daemon/site_settings.h"

#include <chrono>

#include "spinward/config/point_options.h"
#include "spinward/daemon/sensor_health.h"

namespace spinward::daemon {

PointSettings PointSettingsFor(const config::SiteConfig& site, const config::PointConfig& point) {
  PointSettings settings;
  settings.point_id = point.id;
  settings.sensor_id = point.sensor;
  settings.sample_rate_hz = point.sample_rate_hz;
  settings.welch = config::PointWelchOptions(site, point);
  settings.bands = point.bands;
  settings.sample_unit = point.unit;
  settings.sensitivity = point.sensitivity;
  if (point.sensor_checks.full_scale) {
    SensorHealthOptions health;  // the clip margin below full scale is the sensor checks' own
    health.full_scale = point.sensor_checks.full_scale;
    settings.clip_level = health.ClipLevel();
  }
  return settings;
}

std::vector<PointSettings> PointSettingsFromSite(const config::SiteConfig& site) {
  std::vector<PointSettings> all;
  all.reserve(site.points.size());
  for (const auto& point : site.points) all.push_back(PointSettingsFor(site, point));
  return all;
}

std::vector<ListenerOptions> ListenerOptionsFromSite(const config::SiteConfig& site) {
  std::vector<ListenerOptions> all;
  for (const auto& listener : site.listeners) {
    ListenerOptions options;
    options.transport = listener.type == config::ListenerType::kTcp
                            ? ListenerOptions::Transport::kTcp
                            : ListenerOptions::Transport::kUdp;
    options.address = listener.address;
    options.port = listener.port;
    options.max_connections = listener.max_connections;
    options.idle_timeout =
        std::chrono::milliseconds(static_cast<std::int64_t>(listener.idle_timeout_s * 1000.0));
    options.max_frame_bytes = listener.max_frame_bytes;
    options.allowed_peers = listener.allowed_peers;
    all.push_back(std::move(options));
  }
  return all;
}

}  // namespace spinward::daemon
