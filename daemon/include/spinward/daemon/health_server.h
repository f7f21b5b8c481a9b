// A small HTTP endpoint on loopback for supervisors and scrapers: /healthz (JSON: live, ready and
// the figures behind them), /metrics (Prometheus text exposition format 0.0.4) and /api/points
// (JSON array of points and their latest state). GET only; anything else is 404 or 405. The server
// reads its figures through HealthSource, a narrow seam the daemon implements over
// MonitoringService and tests fake. It owns its io_context and one thread; Start binds and serves,
// Stop closes the socket and joins. Formats in docs/health.md.
// Thread-safety: Start/Stop/BoundPort from one controlling thread; HealthSource::Snapshot is
// called on the server's own thread, so the source must be safe to read from another thread.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "spinward/daemon/monitoring_service.h"
#include "spinward/daemon/point_router.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

struct PointHealth {
  std::string id;
  std::string state;  // latest alarm state ("normal", "alert", ...); empty when not known
};

// Everything the endpoints show, copied in one go so one response is self-consistent.
struct HealthSnapshot {
  std::vector<PointHealth> points;
  RouterTotals router;
  SourceTotals sources;
  bool storage_writable = false;
  std::uint64_t storage_backlog_items = 0;  // records accepted but not yet written
  std::uint64_t storage_commits = 0;        // transactions committed ...
  double storage_commit_seconds = 0.0;      // ... and the time they took, summed
  std::vector<BoundListener> listeners;
  bool drop_directory_watched = false;  // a source besides the listeners
  // Messaging (docs/messaging.md): readiness needs the broker only when one is configured.
  bool messaging_configured = false;
  bool broker_connected = false;
  std::uint64_t alarms_published = 0;
  std::uint64_t outbox_pending = 0;
  std::uint64_t band_messages_published = 0;
  std::uint64_t band_messages_skipped = 0;
};

class HealthSource {
 public:
  virtual ~HealthSource() = default;
  virtual HealthSnapshot Snapshot() const = 0;
};

// Ready means the daemon can take data in, keep it and pass alarms on: a source up (a listener
// or the drop directory), storage writable, and the broker connected when messaging is
// configured.
bool IsReady(const HealthSnapshot& snapshot);

struct HealthServerOptions {
  std::string address = "127.0.0.1";  // loopback unless the operator decides otherwise
  std::uint16_t port = 7480;          // 0: any free port (see BoundPort)
  Status Validate() const;
};

class HealthServer {
 public:
  // `source` must stay alive until Stop returns (or the server is destroyed).
  HealthServer(HealthServerOptions options, std::shared_ptr<const HealthSource> source);
  ~HealthServer();
  HealthServer(HealthServer&&) noexcept;
  HealthServer& operator=(HealthServer&&) noexcept;
  HealthServer(const HealthServer&) = delete;
  HealthServer& operator=(const HealthServer&) = delete;

  // Binds and starts serving on the server's own thread. Fails (naming the address and port)
  // when the options are invalid or the address cannot be bound.
  Status Start();
  void Stop();
  // The port actually bound (useful with port 0); 0 before Start.
  std::uint16_t BoundPort() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace spinward::daemon
