#include "spinward/daemon/site_settings.h"

#include <chrono>

#include "spinward/config/point_options.h"
#include "spinward/daemon/sensor_health.h"

namespace spinward::daemon {
namespace {

DiagnosticSettings DiagnosticsFor(const config::SiteConfig& site,
                                  const config::PointConfig& point) {
  DiagnosticSettings d;
  const config::MachineConfig* machine = site.FindMachine(point.machine);
  if (machine == nullptr) return d;
  const config::MachineDiagnosticsConfig& m = machine->diagnostics;
  d.machine_id = machine->id;
  d.nominal_shaft_hz = machine->speed_rpm / 60.0;
  switch (m.speed_source) {
    case config::SpeedSourceKind::kNominal:
      d.speed_source = SpeedSource::kNominal;
      break;
    case config::SpeedSourceKind::kTachometer:
      d.speed_source = SpeedSource::kTachometer;
      break;
    case config::SpeedSourceKind::kSpectrum:
      d.speed_source = SpeedSource::kSpectrum;
      break;
  }
  d.speed_search_fraction = m.speed_search_percent / 100.0;
  d.tachometer = point.diagnostics.tachometer;
  d.order_bands = point.diagnostics.order_bands;
  d.bearing = m.bearing;
  if (point.diagnostics.envelope) {
    const config::EnvelopeConfig& e = *point.diagnostics.envelope;
    EnvelopeSettings envelope;
    envelope.band_low_hz = e.lo_hz;
    envelope.band_high_hz = e.hi_hz;
    envelope.segment_length = e.segment;
    envelope.harmonics = e.harmonics;
    envelope.tolerance = e.tolerance_percent / 100.0;
    d.envelope = envelope;
  }
  return d;
}

}  // namespace

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
  settings.diagnostics = DiagnosticsFor(site, point);
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
