// Everything behind the channel pipelines that needs the trend database: the writer thread, the
// alarm stage in front of it, and the periodic chores of a running daemon (stale checks, operators'
// acknowledgements entered with `spinward ack`, retention pruning by the writer).
// `run` and `demo` both use it, so the demo exercises the real path.
// Thread-safety: Sink() is shared with the worker threads; Tick and Stop from the controlling
// thread.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <string>

#include "spinward/config/site_config.h"
#include "spinward/daemon/alarm_stage.h"
#include "spinward/daemon/outbox_notifier.h"
#include "spinward/estimators/result.h"
#include "spinward/storage/trend_store.h"
#include "spinward/storage/trend_writer.h"

namespace spinward::daemon {

class TrendBackend {
 public:
  using Log = std::function<void(const std::string& level, const std::string& message)>;

  // Opens (or creates and migrates) the site's database, restores alarm states, starts the writer.
  // A database that is corrupt or newer is refused here, with its path and the reason.
  // `outbox`, when given, is notified after each commit that put alarm events in the outbox.
  static Result<std::unique_ptr<TrendBackend>> Open(const config::SiteConfig& site, Log log,
                                                    std::shared_ptr<OutboxNotifier> outbox = {});
  ~TrendBackend();

  std::shared_ptr<RecordSink> Sink() const { return stage_; }
  // Stale checks and acknowledgements; call every few seconds with the wall clock.
  void Tick(std::int64_t now_ns);
  // New alarm rules and sensor checks from a reloaded site; alarms keep their states.
  Status Reconfigure(const config::SiteConfig& site);
  // Writes everything queued (waits up to `timeout`), then stops the writer.
  void Stop(std::chrono::milliseconds timeout = std::chrono::seconds(30));
  storage::WriterCounters Counters() const { return writer_->counters(); }
  const std::string& path() const { return path_; }

 private:
  TrendBackend() = default;
  void ApplyNewAcknowledgements();

  class WriterSubmitter;
  std::string path_;
  Log log_;
  std::unique_ptr<storage::TrendWriter> writer_;
  std::unique_ptr<storage::TrendStore> reader_;
  std::unique_ptr<WriterSubmitter> submitter_;
  std::shared_ptr<AlarmStage> stage_;
  std::int64_t last_ack_id_ = 0;
  bool stopped_ = false;
};

}  // namespace spinward::daemon
