#include "run_outlets.h"

#include <chrono>
#include <map>
#include <mutex>

#include "mosquitto_transport.h"
#include "spinward/daemon/health_server.h"
#include "spinward/daemon/mqtt_publisher.h"

namespace spinward::daemon {
namespace {

// The daemon's figures for the health endpoint: counters read live, the point list and listeners
// copied on the controlling thread (they change only at start and reload).
class ServiceHealth final : public HealthSource {
 public:
  ServiceHealth(const MonitoringService& service, const TrendBackend& backend,
                const MqttPublisher* publisher)
      : service_(service), backend_(backend), publisher_(publisher) {}

  void SiteChanged(const MonitoringService& service) {
    std::lock_guard lock(mutex_);
    points_.clear();
    for (const auto& p : service.site().points) points_.push_back(p.id);
    listeners_ = service.Listeners();
    drop_directory_ = service.site().drop_directory.has_value();
  }

  HealthSnapshot Snapshot() const override {
    HealthSnapshot h;
    h.router = service_.PointTotals();
    h.sources = service_.Sources();
    const auto stored = backend_.Counters();
    h.storage_backlog_items = stored.backlog_items;
    h.storage_writable = !stored.failing;
    h.storage_commits = stored.committed_batches;
    h.storage_commit_seconds = stored.commit_seconds_total;
    std::map<std::string, std::string> states =
        publisher_ ? std::map<std::string, std::string>() : StatesFromStore();
    if (publisher_ != nullptr) {
      const auto m = publisher_->Counters();
      h.messaging_configured = true;
      h.broker_connected = m.connected;
      h.alarms_published = m.alarms_published;
      h.outbox_pending = m.outbox_pending;
      h.band_messages_published = m.band_messages_published;
      h.band_messages_skipped = m.band_messages_skipped;
      states = publisher_->PointStates();
    }
    std::lock_guard lock(mutex_);
    for (const auto& id : points_) {
      auto it = states.find(id);
      h.points.push_back({id, it == states.end() ? std::string() : it->second});
    }
    h.listeners = listeners_;
    h.drop_directory_watched = drop_directory_;
    return h;
  }

 private:
  // Without messaging, the endpoint reads the alarm states itself, at most once a second, through
  // a read-only connection of its own (only the server's thread calls Snapshot).
  std::map<std::string, std::string> StatesFromStore() const {
    std::lock_guard lock(store_mutex_);
    const auto now = std::chrono::steady_clock::now();
    if (now - states_read_ < std::chrono::seconds(1)) return states_;
    states_read_ = now;
    if (!reader_) {
      storage::StoreOptions options;
      options.quick_check_on_open = false;
      auto reader = storage::TrendStore::OpenReadOnly(backend_.path(), options);
      if (!reader.ok()) return states_;
      reader_ = std::make_unique<storage::TrendStore>(std::move(reader).value());
    }
    auto status = reader_->CurrentStatus();
    if (status.ok()) states_ = WorstStates(*status);
    return states_;
  }

  const MonitoringService& service_;
  const TrendBackend& backend_;
  const MqttPublisher* publisher_;
  mutable std::mutex mutex_;
  std::vector<std::string> points_;
  std::vector<BoundListener> listeners_;
  bool drop_directory_ = false;
  mutable std::mutex store_mutex_;
  mutable std::unique_ptr<storage::TrendStore> reader_;
  mutable std::chrono::steady_clock::time_point states_read_{};
  mutable std::map<std::string, std::string> states_;
};

}  // namespace

struct RunOutlets::Parts {
  config::SiteConfig site;
  Log log;
  std::unique_ptr<MqttPublisher> publisher;
  std::shared_ptr<ServiceHealth> health_source;
  std::unique_ptr<HealthServer> health;
};

Result<std::unique_ptr<RunOutlets>> RunOutlets::Start(const config::SiteConfig& site, Log log,
                                                      std::shared_ptr<OutboxNotifier> outbox) {
  std::unique_ptr<RunOutlets> outlets(new RunOutlets());
  outlets->parts_ = std::make_unique<Parts>();
  Parts& p = *outlets->parts_;
  p.site = site;
  p.log = log;
  if (site.messaging) {
    const std::string client_id = site.messaging->client_id.empty()
                                      ? "spinward-" + TopicLevel(site.site.name)
                                      : site.messaging->client_id;
    auto transport = MosquittoTransport::Create(*site.messaging, client_id, log);
    if (!transport.ok()) return Error{transport.message()};
    PublisherOptions options;
    options.outbox_notifier = std::move(outbox);
    auto publisher = MqttPublisher::Start(site, std::move(transport).value(), log, options);
    if (!publisher.ok()) return Error{publisher.message()};
    p.publisher = std::move(publisher).value();
  }
  return outlets;
}

RunOutlets::~RunOutlets() {
  StopHealth();
  StopMessaging();
}

std::shared_ptr<RecordSink> RunOutlets::BandSink() const {
  if (!parts_->publisher || !parts_->site.messaging->band_values.enabled) return nullptr;
  return parts_->publisher->BandSink();
}

void RunOutlets::StartHealth(const MonitoringService& service, const TrendBackend& backend) {
  Parts& p = *parts_;
  if (!p.site.health.enabled) return;
  p.health_source = std::make_shared<ServiceHealth>(service, backend, p.publisher.get());
  p.health_source->SiteChanged(service);
  auto server = std::make_unique<HealthServer>(
      HealthServerOptions{p.site.health.address, p.site.health.port}, p.health_source);
  if (Status s = server->Start(); !s.ok()) {
    if (p.log) p.log("warn", "health endpoint not serving: " + s.message());
    return;
  }
  if (p.log) {
    p.log("info", "health endpoint on http://" + p.site.health.address + ":" +
                      std::to_string(server->BoundPort()) + " (/healthz, /metrics, /api/points)");
  }
  p.health = std::move(server);
}

void RunOutlets::SiteChanged(const MonitoringService& service) {
  if (parts_->health_source) parts_->health_source->SiteChanged(service);
}

std::uint16_t RunOutlets::HealthPort() const {
  return parts_->health ? parts_->health->BoundPort() : 0;
}

void RunOutlets::StopHealth() {
  if (parts_->health) parts_->health->Stop();
  parts_->health.reset();
}

void RunOutlets::StopMessaging() {
  if (parts_->publisher) parts_->publisher->Stop();
}

}  // namespace spinward::daemon
