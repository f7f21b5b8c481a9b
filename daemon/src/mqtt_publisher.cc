#include "spinward/daemon/mqtt_publisher.h"

#include <algorithm>
#include <condition_variable>
#include <deque>
#include <mutex>
#include <optional>
#include <thread>

#include "spinward/daemon/alarm_state.h"
#include "spinward/daemon/command_hook.h"
#include "spinward/daemon/json_lines_sink.h"
#include "spinward/storage/time_text.h"
#include "spinward/storage/trend_store.h"
#include "thread_name.h"

namespace spinward::daemon {
namespace {

using Clock = std::chrono::steady_clock;

constexpr int kSchema = 1;  // payload schema version (docs/messaging.md)

std::string Quoted(const std::string& text) {
  std::string out;
  AppendJsonString(out, text);
  return out;
}

std::string Number(double value) {
  std::string out;
  AppendJsonNumber(out, value);
  return out;
}

}  // namespace

std::map<std::string, std::string> WorstStates(const std::vector<storage::MeasureStatus>& status) {
  std::map<std::string, std::string> worst;
  for (const auto& m : status) {
    if (!m.alarm) continue;
    auto& w = worst[m.point_id];
    if (AlarmStateSeverity(m.alarm->state) > AlarmStateSeverity(w)) w = m.alarm->state;
  }
  return worst;
}

std::string TopicLevel(const std::string& name) {
  std::string out = name;
  for (char& c : out) {
    if (c == '/' || c == '+' || c == '#' || c == '\0' ||
        std::isspace(static_cast<unsigned char>(c)))
      c = '-';
  }
  return out.empty() ? "-" : out;
}

std::string SiteTopic(const config::SiteConfig& site) {
  const std::string prefix = site.messaging ? site.messaging->topic_prefix : "spinward";
  return prefix + "/" + TopicLevel(site.site.name);
}

struct MqttPublisher::Impl {
  config::SiteConfig site;
  config::MessagingConfig config;
  std::string site_topic;
  std::string client_id;
  std::map<std::string, std::string> machine_of;  // point id -> machine id
  Log log;
  PublisherOptions options;
  std::unique_ptr<MqttTransport> transport;
  std::unique_ptr<storage::TrendStore> store;
  std::unique_ptr<CommandHookRunner> hooks;
  std::int64_t hook_seq = 0;
  std::thread thread;

  struct InFlight {
    std::string event_id;
    int id = 0;
  };
  std::optional<InFlight> in_flight;                        // publisher thread only
  std::string last_attempted;                               // event id of the last alarm published
  std::map<std::string, std::string> published_state_keys;  // point -> what its state said
  Clock::time_point last_state_pass{};
  Clock::time_point next_prune{};  // the first pass prunes
  std::string last_store_error;

  mutable std::mutex mutex;  // guards everything below
  std::condition_variable wake;
  bool wake_flag = false;
  bool stop = false;
  bool connected = false;
  bool just_connected = false;
  // Recent acknowledged message ids, oldest first (QoS 1 band values add theirs too; ids wrap at
  // 65535, so the oldest are dropped rather than the smallest).
  std::deque<int> acknowledged;
  std::map<std::string, int> intervals_seen;  // point -> intervals since its last band message
  std::map<std::string, std::string> point_states;
  MessagingCounters counters;

  std::int64_t Now() const { return options.now_ns ? options.now_ns() : storage::WallClockNowNs(); }
  void Say(const std::string& level, const std::string& message) const {
    if (log) log(level, "messaging: " + message);
  }
  void Wake() {
    {
      std::lock_guard lock(mutex);
      wake_flag = true;
    }
    wake.notify_all();
  }
  std::string PointTopic(const std::string& point) const {
    auto it = machine_of.find(point);
    const std::string machine = it == machine_of.end() ? "unknown-machine" : it->second;
    return site_topic + "/" + TopicLevel(machine) + "/" + TopicLevel(point);
  }
  MqttMessage StatusMessage(const char* status) const {
    return {site_topic + "/status",
            "{\"schema\":" + std::to_string(kSchema) + ",\"status\":\"" + status +
                "\",\"time\":" + Quoted(FormatUtc(Now())) + ",\"site\":" + Quoted(site.site.name) +
                ",\"client_id\":" + Quoted(client_id) + "}",
            1, true};
  }
  void StoreFailure(const std::string& what) {
    if (what == last_store_error) return;
    last_store_error = what;
    Say("error", what);
  }

  void RunHooks() {
    if (!hooks) return;
    auto entries = store->OutboxAfter(hook_seq, false, 100);
    if (!entries.ok())
      return StoreFailure("reading the outbox for the command hook: " + entries.message());
    for (auto& entry : *entries) {
      hook_seq = entry.seq;
      hooks->Enqueue(entry.event_id, entry.payload);
    }
  }

  // Marks the alarm in flight sent once its PUBACK is in; then publishes the next one.
  void PumpOutbox() {
    for (;;) {
      if (in_flight) {
        {
          std::lock_guard lock(mutex);
          if (std::find(acknowledged.begin(), acknowledged.end(), in_flight->id) ==
              acknowledged.end())
            return;
        }
        if (Status s = store->MarkOutboxSent(in_flight->event_id, Now()); !s.ok()) {
          return StoreFailure("alarm " + in_flight->event_id + " was delivered but " + s.message() +
                              "; it may be delivered again");
        }
        std::lock_guard lock(mutex);
        if (auto it = std::find(acknowledged.begin(), acknowledged.end(), in_flight->id);
            it != acknowledged.end())
          acknowledged.erase(it);
        ++counters.alarms_published;
        if (counters.outbox_pending > 0) --counters.outbox_pending;
        in_flight.reset();
      }
      auto next = store->OutboxAfter(0, true, 1);
      if (!next.ok()) return StoreFailure("reading the outbox: " + next.message());
      if (next->empty()) return;
      const auto& entry = next->front();
      auto id =
          transport->Publish({PointTopic(entry.point_id) + "/alarm", entry.payload, 1, false});
      if (!id.ok()) return;  // not connected any more: the reconnect publishes it
      {
        std::lock_guard lock(mutex);
        if (entry.event_id == last_attempted) ++counters.alarms_republished;
      }
      last_attempted = entry.event_id;
      in_flight = InFlight{entry.event_id, *id};
    }
  }

  // Reads the stored alarm states, keeps each point's worst, and (when connected) publishes the
  // retained state of every point whose states changed since it was last published.
  void PassStates(bool publish) {
    auto status = store->CurrentStatus();
    if (!status.ok()) return StoreFailure("reading alarm states: " + status.message());
    struct PointView {
      std::string worst;
      std::string key;
      std::string measures;
    };
    std::map<std::string, PointView> views;
    for (const auto& p : site.points) views[p.id];
    for (const auto& m : *status) {
      if (!m.alarm) continue;
      auto& view = views[m.point_id];
      const auto& a = *m.alarm;
      if (AlarmStateSeverity(a.state) > AlarmStateSeverity(view.worst)) view.worst = a.state;
      view.key += m.measure + "=" + a.state + "@" + std::to_string(a.since_ns) +
                  (a.latched ? "L" : "") + (a.ack_by.empty() ? "" : "A") + ";";
      if (!view.measures.empty()) view.measures += ',';
      view.measures +=
          "{\"measure\":" + Quoted(m.measure) + ",\"state\":" + Quoted(a.state) +
          ",\"since\":" + Quoted(FormatUtc(a.since_ns)) + ",\"value\":" + Number(a.last_value) +
          ",\"unit\":" + Quoted(m.unit) + ",\"latched\":" + (a.latched ? "true" : "false") +
          ",\"acknowledged_by\":" + (a.ack_by.empty() ? "null" : Quoted(a.ack_by)) +
          ",\"event_id\":" + (a.last_event_id.empty() ? "null" : Quoted(a.last_event_id)) + "}";
    }
    {
      std::lock_guard lock(mutex);
      point_states.clear();
      for (const auto& [point, view] : views) point_states[point] = view.worst;
    }
    if (!publish) return;
    for (const auto& [point, view] : views) {
      auto known = published_state_keys.find(point);
      if (known != published_state_keys.end() && known->second == view.key) continue;
      auto it = machine_of.find(point);
      std::string payload =
          "{\"schema\":" + std::to_string(kSchema) + ",\"time\":" + Quoted(FormatUtc(Now())) +
          ",\"site\":" + Quoted(site.site.name) +
          ",\"machine\":" + (it == machine_of.end() ? "null" : Quoted(it->second)) +
          ",\"point\":" + Quoted(point) +
          ",\"state\":" + (view.worst.empty() ? "null" : Quoted(view.worst)) + ",\"measures\":[" +
          view.measures + "]}";
      if (!transport->Publish({PointTopic(point) + "/state", payload, 1, true}).ok()) return;
      published_state_keys[point] = view.key;
      std::lock_guard lock(mutex);
      ++counters.states_published;
    }
  }

  // Deletes one bounded batch of sent rows past the retention, not more often than prune_every
  // unless the last batch was full. Needs no broker.
  void PruneSent() {
    if (Clock::now() < next_prune) return;
    const auto retention_ns = static_cast<std::int64_t>(config.sent_retention_h * 3.6e12);
    auto pruned = store->PruneSentOutbox(Now() - retention_ns, options.prune_batch_rows);
    if (!pruned.ok()) {
      next_prune = Clock::now() + options.prune_every;
      return StoreFailure(pruned.message());
    }
    next_prune = *pruned >= options.prune_batch_rows ? Clock::time_point{}
                                                     : Clock::now() + options.prune_every;
    std::lock_guard lock(mutex);
    counters.outbox_pruned += static_cast<std::uint64_t>(*pruned);
  }

  void CountPending() {
    auto pending = store->OutboxAfter(0, true, 100000);
    if (!pending.ok()) return;
    std::lock_guard lock(mutex);
    counters.outbox_pending = pending->size();
  }

  void Pass(bool final_pass) {
    bool is_connected = false;
    bool fresh = false;
    {
      std::lock_guard lock(mutex);
      is_connected = connected;
      fresh = just_connected;
      just_connected = false;
      if (fresh) acknowledged.clear();
    }
    if (fresh) {
      in_flight.reset();  // the new session starts again from the oldest unsent alarm
      published_state_keys.clear();
      (void)transport->Publish(StatusMessage("online"));
      CountPending();
    }
    RunHooks();
    if (is_connected) PumpOutbox();
    if (!final_pass) PruneSent();
    if (fresh || final_pass || Clock::now() - last_state_pass >= std::chrono::seconds(1)) {
      last_state_pass = Clock::now();
      PassStates(is_connected);
      if (!fresh) CountPending();
    }
  }

  void Run() {
    for (;;) {
      {
        std::unique_lock lock(mutex);
        wake.wait_for(lock, options.poll, [&] { return stop || wake_flag; });
        wake_flag = false;
        if (stop) return;
      }
      Pass(false);
    }
  }
};

MqttPublisher::MqttPublisher(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}

Result<std::unique_ptr<MqttPublisher>> MqttPublisher::Start(
    const config::SiteConfig& site, std::unique_ptr<MqttTransport> transport, Log log,
    PublisherOptions options) {
  if (!site.messaging) return Error{"messaging: no messaging section in the site configuration"};
  if (options.prune_batch_rows < 1 || options.prune_every.count() < 0) {
    return Error{"messaging: prune_batch_rows must be at least 1 and prune_every not negative"};
  }
  auto impl = std::make_unique<Impl>();
  impl->site = site;
  impl->config = *site.messaging;
  impl->site_topic = SiteTopic(site);
  impl->client_id = impl->config.client_id.empty() ? "spinward-" + TopicLevel(site.site.name)
                                                   : impl->config.client_id;
  for (const auto& p : site.points) impl->machine_of[p.id] = p.machine;
  impl->log = std::move(log);
  impl->options = std::move(options);
  impl->transport = std::move(transport);
  storage::StoreOptions store_options;
  store_options.quick_check_on_open = false;  // the trend backend checked it a moment ago
  auto store = storage::TrendStore::Open(site.storage.path, store_options);
  if (!store.ok()) return Error{"messaging: " + store.message()};
  impl->store = std::make_unique<storage::TrendStore>(std::move(store).value());
  if (impl->config.command_hook) {
    auto seq = impl->store->LastOutboxSeq();
    if (!seq.ok()) return Error{"messaging: " + seq.message()};
    impl->hook_seq = *seq;  // alarms stored before this start had their hook run already
    impl->hooks = std::make_unique<CommandHookRunner>(*impl->config.command_hook, impl->log);
  }
  Impl* raw = impl.get();
  MqttCallbacks callbacks;
  callbacks.on_connected = [raw] {
    {
      std::lock_guard lock(raw->mutex);
      raw->connected = true;
      raw->just_connected = true;
      ++raw->counters.connections;
    }
    raw->Wake();
  };
  callbacks.on_disconnected = [raw](const std::string&) {
    {
      std::lock_guard lock(raw->mutex);
      raw->connected = false;
    }
    raw->Wake();
  };
  callbacks.on_acknowledged = [raw](int id) {
    {
      std::lock_guard lock(raw->mutex);
      if (raw->acknowledged.size() >= 1000) raw->acknowledged.pop_front();
      raw->acknowledged.push_back(id);
    }
    raw->Wake();
  };
  raw->CountPending();
  if (Status s = raw->transport->Start(std::move(callbacks), raw->StatusMessage("offline"));
      !s.ok()) {
    return Error{s.message()};
  }
  if (raw->options.outbox_notifier) raw->options.outbox_notifier->Listen([raw] { raw->Wake(); });
  raw->thread = std::thread([raw] {
    NameThisThread("spw-publisher");
    raw->Run();
  });
  return std::unique_ptr<MqttPublisher>(new MqttPublisher(std::move(impl)));
}

MqttPublisher::~MqttPublisher() { Stop(); }

void MqttPublisher::Stop(std::chrono::milliseconds grace) {
  Impl& s = *impl_;
  {
    std::lock_guard lock(s.mutex);
    if (s.stop) return;
    s.stop = true;
  }
  // From here on no commit can call into this publisher (Listen waits for a running Notify).
  if (s.options.outbox_notifier) s.options.outbox_notifier->Listen({});
  s.wake.notify_all();
  if (s.thread.joinable()) s.thread.join();
  // The last alarms stored at shutdown: hooks run, and a connected broker gets them.
  const auto until = Clock::now() + grace;
  do {
    s.Pass(true);
    {
      std::lock_guard lock(s.mutex);
      if (!s.connected || s.counters.outbox_pending == 0) break;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
  } while (Clock::now() < until);
  s.transport->Stop(s.StatusMessage("offline"));
  s.hooks.reset();  // runs what is queued, then joins
}

void MqttPublisher::OfferRecord(const storage::MeasurementRecord& record) {
  Impl& s = *impl_;
  const auto& bands = s.config.band_values;
  if (!bands.enabled) return;
  {
    std::lock_guard lock(s.mutex);
    int& seen = s.intervals_seen[record.point_id];
    if (++seen < bands.every_intervals) return;
    seen = 0;
    if (!s.connected) {
      ++s.counters.band_messages_skipped;
      return;
    }
  }
  auto it = s.machine_of.find(record.point_id);
  std::string payload =
      "{\"schema\":" + std::to_string(kSchema) + ",\"site\":" + Quoted(s.site.site.name) +
      ",\"machine\":" + (it == s.machine_of.end() ? "null" : Quoted(it->second)) +
      ",\"point\":" + Quoted(record.point_id) +
      ",\"start\":" + Quoted(FormatUtc(record.interval_start_ns)) +
      ",\"end\":" + Quoted(FormatUtc(record.interval_end_ns)) +
      ",\"sensor_fault\":" + (record.sensor_fault ? "true" : "false") + ",\"bands\":[";
  for (std::size_t i = 0; i < record.bands.size(); ++i) {
    const auto& b = record.bands[i];
    if (i) payload += ',';
    payload += "{\"name\":" + Quoted(b.name) + ",\"lo_hz\":" + Number(b.lo_hz) +
               ",\"hi_hz\":" + Number(b.hi_hz) + ",\"value\":" + Number(b.rms) +
               ",\"unit\":" + Quoted(b.unit) + "}";
  }
  payload += "],\"overall\":{\"rms\":" + Number(record.indicators.rms) +
             ",\"peak\":" + Number(record.indicators.peak) +
             ",\"crest_factor\":" + Number(record.indicators.crest_factor) +
             ",\"unit\":" + Quoted(record.sample_unit) + "}}";
  const bool sent =
      s.transport->Publish({s.PointTopic(record.point_id) + "/bands", payload, bands.qos, false})
          .ok();
  std::lock_guard lock(s.mutex);
  ++(sent ? s.counters.band_messages_published : s.counters.band_messages_skipped);
}

namespace {
class BandValueSink final : public RecordSink {
 public:
  explicit BandValueSink(MqttPublisher& publisher) : publisher_(publisher) {}
  void Consume(const storage::MeasurementRecord& record) override {
    publisher_.OfferRecord(record);
  }

 private:
  MqttPublisher& publisher_;
};
}  // namespace

std::shared_ptr<RecordSink> MqttPublisher::BandSink() {
  return std::make_shared<BandValueSink>(*this);
}

MessagingCounters MqttPublisher::Counters() const {
  std::lock_guard lock(impl_->mutex);
  MessagingCounters c = impl_->counters;
  c.connected = impl_->connected;
  if (impl_->hooks) {
    c.hook_runs = impl_->hooks->runs();
    c.hook_failures = impl_->hooks->failures();
  }
  return c;
}

std::map<std::string, std::string> MqttPublisher::PointStates() const {
  std::lock_guard lock(impl_->mutex);
  return impl_->point_states;
}

}  // namespace spinward::daemon
