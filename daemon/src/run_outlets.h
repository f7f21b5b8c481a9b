// What `spinward run` offers the outside besides its trend database: plant messaging over MQTT
// (when the site has a messaging section) and the HTTP health endpoint (unless health.enabled is
// false). Kept out of command_run.cc so the command reads as start, loop, stop.
// Order: Start after the trend backend has opened the database and before the monitoring
// service is created (its band-value sink goes into the service's sinks); StartHealth after the
// service has started; StopHealth before the service stops; StopMessaging after the backend has
// written everything, so the last alarms still reach the broker and the hook.
// Thread-safety: all calls from the controlling thread; the health endpoint reads through its own
// locked copy.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <string>

#include "spinward/config/site_config.h"
#include "spinward/daemon/monitoring_service.h"
#include "spinward/daemon/outbox_notifier.h"
#include "spinward/daemon/record_sink.h"
#include "spinward/estimators/result.h"
#include "trend_backend.h"

namespace spinward::daemon {

class RunOutlets {
 public:
  using Log = std::function<void(const std::string& level, const std::string& message)>;

  // Fails only for settings that cannot work at all (an unreadable password file or TLS file); a
  // broker that cannot be reached is retried in the background. `outbox` (the one given to the
  // trend backend) wakes the publisher when alarms are committed.
  static Result<std::unique_ptr<RunOutlets>> Start(const config::SiteConfig& site, Log log,
                                                   std::shared_ptr<OutboxNotifier> outbox = {});
  ~RunOutlets();

  // Band values for messaging; null when none are published.
  std::shared_ptr<RecordSink> BandSink() const;
  // A bind failure is logged and the daemon runs on without the endpoint.
  void StartHealth(const MonitoringService& service, const TrendBackend& backend);
  // After a start or a reload: the points and listeners the endpoint reports.
  void SiteChanged(const MonitoringService& service);
  std::uint16_t HealthPort() const;  // 0 when not serving
  void StopHealth();
  void StopMessaging();

 private:
  RunOutlets() = default;
  struct Parts;
  std::unique_ptr<Parts> parts_;
};

}  // namespace spinward::daemon
