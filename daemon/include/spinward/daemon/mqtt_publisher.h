// Plant messaging (docs/messaging.md): publishes alarm transitions from the SQLite outbox, the
// retained current state of every point, band values per interval and the daemon's online/offline
// status (with a Last Will) through an MqttTransport.
//
// Alarms leave the outbox one at a time, oldest first, QoS 1; a row is marked sent only after the
// broker's PUBACK, so a broker outage or a daemon restart delays alarms but loses none. After a
// reconnect the oldest unsent alarm is published again, so a consumer may see an event twice and
// drops the repeat by its event_id. Band values are not stored for later: while the broker is
// away they are counted as skipped. The command hook (if configured) runs for every alarm that
// enters the outbox while the daemon runs, whether or not a broker is reachable.
// The publisher reads and marks the outbox through a database connection of its own (WAL lets
// it work beside the trend writer). It looks at the outbox when an OutboxNotifier says the writer
// committed alarm events, and every `poll` besides (rows another process wrote, missed wakes).
// Sent rows older than messaging.sent_retention_h are deleted a bounded batch at a time.
// Thread-safety: OfferRecord from any thread (worker threads); Counters and PointStates from any
// thread; Stop from the controlling thread.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include "spinward/config/site_config.h"
#include "spinward/daemon/mqtt_transport.h"
#include "spinward/daemon/outbox_notifier.h"
#include "spinward/daemon/record_sink.h"
#include "spinward/estimators/result.h"
#include "spinward/storage/measurement_record.h"
#include "spinward/storage/trend_store.h"

namespace spinward::daemon {

struct MessagingCounters {
  bool connected = false;
  std::uint64_t alarms_published = 0;    // acknowledged by the broker (PUBACK)
  std::uint64_t alarms_republished = 0;  // published again after a reconnect
  std::uint64_t outbox_pending = 0;      // alarms not yet acknowledged (as of the last check)
  std::uint64_t outbox_pruned = 0;       // sent rows deleted after messaging.sent_retention_h
  std::uint64_t states_published = 0;
  std::uint64_t band_messages_published = 0;
  std::uint64_t band_messages_skipped = 0;  // due while not connected
  std::uint64_t connections = 0;            // successful CONNACKs
  std::uint64_t hook_runs = 0;
  std::uint64_t hook_failures = 0;
};

struct PublisherOptions {
  std::chrono::milliseconds poll{250};  // outbox and state checks when nothing wakes it earlier
  // Wakes the publisher when the trend writer has committed alarm events; null: the poll finds
  // them. The publisher listens from Start to Stop.
  std::shared_ptr<OutboxNotifier> outbox_notifier;
  // Sent rows past their retention: at most prune_batch_rows per pass, a pass every prune_every
  // (at the next poll or wake while a full batch went, so a backlog drains in steps).
  std::chrono::milliseconds prune_every{60000};
  int prune_batch_rows = 500;
  // Wall clock (UTC ns) for status and state times; null: the system clock.
  std::function<std::int64_t()> now_ns;
};

// The worst stored alarm state of each point that has one.
std::map<std::string, std::string> WorstStates(const std::vector<storage::MeasureStatus>& status);

// Makes a topic level of a name: '/', '+', '#', NUL and white space become '-'.
std::string TopicLevel(const std::string& name);
// "<prefix>/<site>" for a site's messaging settings.
std::string SiteTopic(const config::SiteConfig& site);

class MqttPublisher {
 public:
  using Log = std::function<void(const std::string& level, const std::string& message)>;

  // `site.messaging` must be set. Opens its own connection to site.storage.path (which the trend
  // backend has created), starts the transport and the publisher's thread.
  static Result<std::unique_ptr<MqttPublisher>> Start(const config::SiteConfig& site,
                                                      std::unique_ptr<MqttTransport> transport,
                                                      Log log, PublisherOptions options = {});
  ~MqttPublisher();  // Stop()
  MqttPublisher(const MqttPublisher&) = delete;
  MqttPublisher& operator=(const MqttPublisher&) = delete;

  // A finished interval: every Nth per point becomes a band-values message (when enabled).
  void OfferRecord(const storage::MeasurementRecord& record);
  // A RecordSink that hands records to OfferRecord (valid while the publisher lives).
  std::shared_ptr<RecordSink> BandSink();
  MessagingCounters Counters() const;
  // The worst alarm state of each point, as last read from storage ("normal", "alert", ...).
  std::map<std::string, std::string> PointStates() const;
  // A last pass (hooks for alarms stored since the previous pass; pending alarms get up to
  // `grace` to reach a connected broker), then "offline" and a clean disconnect.
  void Stop(std::chrono::milliseconds grace = std::chrono::seconds(3));

 private:
  struct Impl;
  explicit MqttPublisher(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace spinward::daemon
