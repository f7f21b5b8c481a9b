#include "spinward/config/site_diff.h"

namespace spinward::config {
namespace {

// Written out field by field: the estimator option types carry no operator==, and a field added to
// a struct later must be added here too (a reload would otherwise miss its change).
bool Same(const estimators::WindowSpec& a, const estimators::WindowSpec& b) {
  return a.kind == b.kind && a.symmetry == b.symmetry &&
         (a.kind != estimators::WindowKind::kKaiser || a.kaiser_beta == b.kaiser_beta);
}

bool Same(const estimators::BandSpec& a, const estimators::BandSpec& b) {
  return a.name == b.name && a.lo_hz == b.lo_hz && a.hi_hz == b.hi_hz && a.unit == b.unit;
}

bool Same(const std::optional<estimators::Sensitivity>& a,
          const std::optional<estimators::Sensitivity>& b) {
  if (a.has_value() != b.has_value()) return false;
  return !a || (a->volts_per_unit == b->volts_per_unit && a->unit == b->unit);
}

bool Same(const ProfileConfig& a, const ProfileConfig& b) {
  return a.segment_length == b.segment_length && a.overlap == b.overlap &&
         a.fft_length == b.fft_length && Same(a.window, b.window) && a.detrend == b.detrend &&
         a.averaging == b.averaging && a.interval_s == b.interval_s &&
         a.time_constant_s == b.time_constant_s;
}

bool Same(const MachineConfig& a, const MachineConfig& b) {
  return a.name == b.name && a.kind == b.kind && a.speed_rpm == b.speed_rpm &&
         a.iso_group == b.iso_group && a.support == b.support && a.diagnostics == b.diagnostics;
}

bool Same(const AlarmLimitConfig& a, const AlarmLimitConfig& b) {
  return a.measure == b.measure && a.alert == b.alert && a.danger == b.danger &&
         a.low_alert == b.low_alert && a.low_danger == b.low_danger &&
         a.deadband.kind == b.deadband.kind && a.deadband.value == b.deadband.value &&
         a.on_delay.n == b.on_delay.n && a.on_delay.m == b.on_delay.m &&
         a.off_delay == b.off_delay && a.latching == b.latching &&
         a.stale_after_s == b.stale_after_s && a.preset == b.preset && a.baseline == b.baseline;
}

bool Same(const std::optional<ValueRange>& a, const std::optional<ValueRange>& b) {
  if (a.has_value() != b.has_value()) return false;
  return !a || (a->low == b->low && a->high == b->high);
}

bool Same(const SensorChecksConfig& a, const SensorChecksConfig& b) {
  return a.full_scale == b.full_scale && a.clip_count == b.clip_count &&
         a.noise_floor_rms == b.noise_floor_rms && a.identical_run == b.identical_run &&
         Same(a.mean_window, b.mean_window) && a.max_sequence_gaps == b.max_sequence_gaps;
}

bool Same(const ListenerConfig& a, const ListenerConfig& b) {
  return a.type == b.type && a.address == b.address && a.port == b.port &&
         a.max_connections == b.max_connections && a.idle_timeout_s == b.idle_timeout_s &&
         a.max_frame_bytes == b.max_frame_bytes && a.allowed_peers == b.allowed_peers;
}

bool Same(const DropFileConfig& a, const DropFileConfig& b) {
  return a.pattern == b.pattern && a.point == b.point && a.format == b.format &&
         a.sample_rate_hz == b.sample_rate_hz;
}

bool Same(const HealthConfig& a, const HealthConfig& b) {
  return a.enabled == b.enabled && a.address == b.address && a.port == b.port;
}

bool Same(const MessagingConfig& a, const MessagingConfig& b) {
  auto same_tls = [](const std::optional<MqttTlsConfig>& x, const std::optional<MqttTlsConfig>& y) {
    if (x.has_value() != y.has_value()) return false;
    return !x ||
           (x->ca_file == y->ca_file && x->cert_file == y->cert_file && x->key_file == y->key_file);
  };
  auto same_hook = [](const std::optional<CommandHookConfig>& x,
                      const std::optional<CommandHookConfig>& y) {
    if (x.has_value() != y.has_value()) return false;
    return !x || (x->program == y->program && x->args == y->args && x->timeout_s == y->timeout_s);
  };
  return a.host == b.host && a.port == b.port && a.client_id == b.client_id &&
         a.protocol == b.protocol && a.topic_prefix == b.topic_prefix &&
         a.keepalive_s == b.keepalive_s && a.username == b.username &&
         a.password_file == b.password_file && same_tls(a.tls, b.tls) &&
         a.reconnect_min_s == b.reconnect_min_s && a.reconnect_max_s == b.reconnect_max_s &&
         a.sent_retention_h == b.sent_retention_h &&
         a.band_values.enabled == b.band_values.enabled &&
         a.band_values.every_intervals == b.band_values.every_intervals &&
         a.band_values.qos == b.band_values.qos && same_hook(a.command_hook, b.command_hook);
}

template <typename Entry>
bool SameList(const std::vector<Entry>& a, const std::vector<Entry>& b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i) {
    if (!Same(a[i], b[i])) return false;
  }
  return true;
}

bool SamePointKeys(const PointConfig& a, const PointConfig& b) {
  return a.machine == b.machine && a.location == b.location && a.direction == b.direction &&
         a.sensor == b.sensor && Same(a.sensitivity, b.sensitivity) && a.unit == b.unit &&
         a.sample_rate_hz == b.sample_rate_hz && a.profile == b.profile &&
         SameList(a.bands, b.bands) && SameList(a.alarms, b.alarms) &&
         Same(a.sensor_checks, b.sensor_checks) && a.diagnostics == b.diagnostics;
}

// Both referenced entries missing counts as the same; one missing as a change.
template <typename Entry>
bool SameReferenced(const Entry* a, const Entry* b) {
  if (a == nullptr || b == nullptr) return a == b;
  return Same(*a, *b);
}

bool Same(const DropDirectoryConfig& a, const DropDirectoryConfig& b) {
  if (a.path != b.path || a.poll_interval_s != b.poll_interval_s) return false;
  if (a.files.size() != b.files.size()) return false;
  for (std::size_t i = 0; i < a.files.size(); ++i) {
    if (!Same(a.files[i], b.files[i])) return false;
  }
  return true;
}

bool Same(const StorageConfig& a, const StorageConfig& b) {
  return a.path == b.path && a.retention.raw_days == b.retention.raw_days &&
         a.retention.hourly_days == b.retention.hourly_days &&
         a.retention.daily_days == b.retention.daily_days &&
         a.retention.spectrum_days == b.retention.spectrum_days &&
         a.spectrum_every_s == b.spectrum_every_s && a.durability == b.durability;
}

}  // namespace

SiteDiff DiffSites(const SiteConfig& before, const SiteConfig& after) {
  SiteDiff diff;
  for (const auto& point : after.points) {
    const PointConfig* old = before.FindPoint(point.id);
    if (old == nullptr) {
      diff.added.push_back(point.id);
    } else if (SamePointKeys(*old, point) &&
               SameReferenced(before.FindProfile(old->profile), after.FindProfile(point.profile)) &&
               SameReferenced(before.FindMachine(old->machine), after.FindMachine(point.machine))) {
      diff.unchanged.push_back(point.id);
    } else {
      diff.changed.push_back(point.id);
    }
  }
  for (const auto& point : before.points) {
    if (after.FindPoint(point.id) == nullptr) diff.removed.push_back(point.id);
  }
  diff.site_changed = before.site.name != after.site.name;
  diff.listeners_changed = !SameList(before.listeners, after.listeners);
  diff.drop_directory_changed =
      before.drop_directory.has_value() != after.drop_directory.has_value() ||
      (before.drop_directory && !Same(*before.drop_directory, *after.drop_directory));
  diff.storage_changed = !Same(before.storage, after.storage);
  diff.logging_changed =
      before.logging.level != after.logging.level || before.logging.file != after.logging.file;
  diff.outlets_changed = !Same(before.health, after.health) ||
                         before.messaging.has_value() != after.messaging.has_value() ||
                         (before.messaging && !Same(*before.messaging, *after.messaging));
  return diff;
}

}  // namespace spinward::config
