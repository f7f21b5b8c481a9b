// The running daemon: one site configuration brought to life. Owns the point router (worker pool
// and one pipeline per point), the network threads, the listeners, the drop directory and the
// sinks. Start brings the sources up; Reload applies a new configuration (unchanged points keep
// their running state, changed points restart, sources restart only if their own settings changed);
// Stop stops the sources, flushes every point's interval in progress to the sinks, and returns.
// Thread-safety: Start/Reload/Stop from one controlling thread; Totals from any.
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "spinward/config/site_config.h"
#include "spinward/daemon/point_router.h"
#include "spinward/daemon/record_sink.h"
#include "spinward/daemon/source_counters.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

struct ServiceOptions {
  std::size_t worker_threads = 0;  // 0: one per hardware thread
  std::size_t network_threads = 1;
  std::size_t max_queued_samples_per_point = 1 << 20;
  std::shared_ptr<RecordSink>
      sink;  // where records go (the caller composes log/JSON/storage sinks)
  // Receives what the daemon wants to say (source problems, rejected blocks, reloads), already
  // rate-limited; level is "info", "warn" or "error".
  std::function<void(const std::string& level, const std::string& message)> log;
};

struct BoundListener {
  std::string description;  // "tcp 127.0.0.1:7400"
  bool tcp = true;
  std::uint16_t port = 0;
};

// Totals over all sources, for logs, /metrics and the demo.
struct SourceTotals {
  std::uint64_t frames = 0, bytes = 0, bad_frames = 0, unknown_sensor = 0, dropped_full = 0;
  std::uint64_t paused_full = 0, refused_peer = 0, refused_connections = 0, connections = 0;
  std::uint64_t files_done = 0, files_rejected = 0;
  std::vector<std::pair<std::string, std::uint64_t>> bad_frames_by_reason;
};

class MonitoringService {
 public:
  static Result<std::unique_ptr<MonitoringService>> Create(const config::SiteConfig& site,
                                                           ServiceOptions options);
  ~MonitoringService();
  MonitoringService(const MonitoringService&) = delete;
  MonitoringService& operator=(const MonitoringService&) = delete;

  Status Start();
  // Applies `next`; on failure the running configuration stays as it was.
  Result<ReloadSummary> Reload(const config::SiteConfig& next);
  void Stop();

  std::vector<BoundListener> Listeners() const;
  RouterTotals PointTotals() const;
  SourceTotals Sources() const;
  // Waits until every block received so far has been processed (tests, demo).
  void Drain();
  const config::SiteConfig& site() const;

 private:
  struct Impl;
  explicit MonitoringService(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace spinward::daemon
