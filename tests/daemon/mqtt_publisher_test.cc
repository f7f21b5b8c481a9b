// MqttPublisher's delivery logic over a fake transport and a real trend database: alarms leave the
// outbox one at a time, oldest first, are marked sent only after their PUBACK, and the oldest
// unacknowledged one is published again after a reconnect (at-least-once delivery, MQTT 3.1.1
// section 4.3.2 and 4.6: QoS 1 messages in order, duplicates possible). Status and retained state
// messages follow docs/messaging.md. The real-broker behaviour is in messaging_broker_test.cc.
#include "spinward/daemon/mqtt_publisher.h"

#include <gtest/gtest.h>

#include <mutex>

#include "daemon/wait_until.h"
#include "spinward/daemon/outbox_notifier.h"
#include "spinward/storage/trend_store.h"
#include "spinward/storage/trend_writer.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

using testing::WaitUntil;

class FakeTransport final : public MqttTransport {
 public:
  struct Shared {
    std::mutex mutex;
    MqttCallbacks callbacks;
    MqttMessage will;
    bool connected = false;
    std::vector<std::pair<int, MqttMessage>> published;
    std::vector<MqttMessage> farewells;
    int next_id = 1;
  };
  explicit FakeTransport(std::shared_ptr<Shared> shared) : s_(std::move(shared)) {}
  Status Start(MqttCallbacks callbacks, const MqttMessage& will) override {
    std::lock_guard lock(s_->mutex);
    s_->callbacks = std::move(callbacks);
    s_->will = will;
    return Status::Ok();
  }
  Result<int> Publish(const MqttMessage& message) override {
    std::lock_guard lock(s_->mutex);
    if (!s_->connected) return Error{"not connected"};
    s_->published.emplace_back(s_->next_id, message);
    return s_->next_id++;
  }
  void Stop(const MqttMessage& farewell) override {
    std::lock_guard lock(s_->mutex);
    s_->farewells.push_back(farewell);
  }

 private:
  std::shared_ptr<Shared> s_;
};

config::SiteConfig Site(const std::filesystem::path& db) {
  config::SiteConfig site;
  site.site.name = "Larkfield booster pump station";
  config::MachineConfig machine;
  machine.id = "P-101";
  machine.name = "Booster pump 1";
  machine.kind = config::MachineKind::kPump;
  machine.speed_rpm = 1480.0;
  site.machines.push_back(machine);
  config::PointConfig point;
  point.id = "P101-DE-H";
  point.machine = "P-101";
  site.points.push_back(point);
  site.storage.path = db.string();
  config::MessagingConfig messaging;
  messaging.host = "127.0.0.1";
  messaging.topic_prefix = "water";
  site.messaging = messaging;
  return site;
}

storage::WriteBatch AlarmBatch(const std::string& event_id, std::int64_t t, const char* from,
                               const char* to) {
  storage::WriteBatch batch;
  storage::MeasurementRecord r;
  r.point_id = "P101-DE-H";
  r.interval_start_ns = t;
  r.interval_end_ns = t + 1'000'000'000;
  r.sample_unit = "g";
  r.bands.push_back({"velocity", "mm/s", 10.0, 1000.0, 7.2});
  batch.records.push_back(r);
  storage::AlarmEventRecord e;
  e.event_id = event_id;
  e.time_ns = t;
  e.point_id = "P101-DE-H";
  e.measure = "velocity";
  e.from_state = from;
  e.to_state = to;
  e.value = 7.2;
  e.outbox_payload = "{\"schema\":1,\"event_id\":\"" + event_id + "\"}";
  batch.events.push_back(e);
  storage::AlarmStateRecord s;
  s.point_id = "P101-DE-H";
  s.measure = "velocity";
  s.state = to;
  s.since_ns = t;
  s.last_event_id = event_id;
  s.updated_ns = t;
  batch.states.push_back(s);
  return batch;
}

std::vector<std::pair<int, MqttMessage>> Alarms(FakeTransport::Shared& s) {
  std::lock_guard lock(s.mutex);
  std::vector<std::pair<int, MqttMessage>> out;
  for (const auto& p : s.published) {
    if (p.second.topic.ends_with("/alarm")) out.push_back(p);
  }
  return out;
}

TEST(MqttPublisher, AlarmsLeaveTheOutboxInOrderOnlyAfterTheirAcknowledgement) {
  const auto dir = spinward::testing::FreshTempDir("mqtt-publisher-order");
  const auto db = dir / "trends.sqlite";
  const std::int64_t t0 = 1'772'445'600'000'000'000;  // 2026-03-02T10:00:00Z
  {
    auto store = storage::TrendStore::Open(db.string());
    ASSERT_TRUE(store.ok()) << store.message();
    ASSERT_TRUE(store->Write(AlarmBatch("ev-1", t0, "normal", "alert")).status.ok());
    ASSERT_TRUE(
        store->Write(AlarmBatch("ev-2", t0 + 1'000'000'000, "alert", "danger")).status.ok());
    ASSERT_TRUE(
        store->Write(AlarmBatch("ev-3", t0 + 2'000'000'000, "danger", "normal")).status.ok());
  }
  auto shared = std::make_shared<FakeTransport::Shared>();
  PublisherOptions options;
  options.poll = std::chrono::milliseconds(10);
  auto publisher =
      MqttPublisher::Start(Site(db), std::make_unique<FakeTransport>(shared), {}, options);
  ASSERT_TRUE(publisher.ok()) << publisher.message();
  EXPECT_EQ(shared->will.topic, "water/Larkfield-booster-pump-station/status");
  EXPECT_TRUE(shared->will.retain);
  EXPECT_NE(shared->will.payload.find("\"status\":\"offline\""), std::string::npos);

  auto connect = [&] {
    {
      std::lock_guard lock(shared->mutex);
      shared->connected = true;
    }
    shared->callbacks.on_connected();
  };
  auto ack = [&](int id) { shared->callbacks.on_acknowledged(id); };
  auto pending = [&] {
    auto store = storage::TrendStore::OpenReadOnly(db.string());
    return store->OutboxAfter(0, true, 100)->size();
  };

  connect();
  ASSERT_TRUE(WaitUntil([&] { return Alarms(*shared).size() == 1; }));
  auto alarms = Alarms(*shared);
  EXPECT_EQ(alarms[0].second.topic, "water/Larkfield-booster-pump-station/P-101/P101-DE-H/alarm");
  EXPECT_EQ(alarms[0].second.qos, 1);
  EXPECT_FALSE(alarms[0].second.retain);
  EXPECT_EQ(alarms[0].second.payload, "{\"schema\":1,\"event_id\":\"ev-1\"}");
  // Not acknowledged yet: nothing marked sent and no second alarm in flight.
  std::this_thread::sleep_for(std::chrono::milliseconds(100));
  EXPECT_EQ(Alarms(*shared).size(), 1u);
  EXPECT_EQ(pending(), 3u);

  ack(alarms[0].first);
  ASSERT_TRUE(WaitUntil([&] { return Alarms(*shared).size() == 2; }));
  EXPECT_EQ(pending(), 2u);
  EXPECT_NE(Alarms(*shared)[1].second.payload.find("ev-2"), std::string::npos);

  // The connection drops before ev-2's PUBACK: after the reconnect ev-2 goes out again.
  {
    std::lock_guard lock(shared->mutex);
    shared->connected = false;
  }
  shared->callbacks.on_disconnected("test");
  connect();
  ASSERT_TRUE(WaitUntil([&] { return Alarms(*shared).size() == 3; }));
  alarms = Alarms(*shared);
  EXPECT_NE(alarms[2].second.payload.find("ev-2"), std::string::npos);
  ack(alarms[1].first);  // a late PUBACK from the old session changes nothing
  ack(alarms[2].first);
  ASSERT_TRUE(WaitUntil([&] { return Alarms(*shared).size() == 4; }));
  alarms = Alarms(*shared);
  EXPECT_NE(alarms[3].second.payload.find("ev-3"), std::string::npos);
  ack(alarms[3].first);
  ASSERT_TRUE(WaitUntil([&] { return pending() == 0; }));
  // The counter follows the database mark on the publisher's thread.
  ASSERT_TRUE(WaitUntil([&] { return (*publisher)->Counters().alarms_published == 3; }));
  const auto counters = (*publisher)->Counters();
  EXPECT_EQ(counters.alarms_published, 3u);
  EXPECT_EQ(counters.alarms_republished, 1u);

  // Online status and the point's retained state.
  bool online = false, state = false;
  {
    std::lock_guard lock(shared->mutex);
    for (const auto& [id, m] : shared->published) {
      if (m.topic.ends_with("/status") && m.payload.find("\"online\"") != std::string::npos)
        online = m.retain;
      if (m.topic == "water/Larkfield-booster-pump-station/P-101/P101-DE-H/state") {
        state = m.retain && m.payload.find("\"state\":\"normal\"") != std::string::npos;
      }
    }
  }
  EXPECT_TRUE(online);
  EXPECT_TRUE(state);
  EXPECT_EQ((*publisher)->PointStates().at("P101-DE-H"), "normal");
  (*publisher)->Stop(std::chrono::milliseconds(0));
  std::lock_guard lock(shared->mutex);
  ASSERT_EQ(shared->farewells.size(), 1u);
  EXPECT_NE(shared->farewells[0].payload.find("\"offline\""), std::string::npos);
}

// Connects the fake transport and waits for the publisher's first pass (its "online" status).
void ConnectAndWaitOnline(FakeTransport::Shared& shared) {
  {
    std::lock_guard lock(shared.mutex);
    shared.connected = true;
  }
  shared.callbacks.on_connected();
  ASSERT_TRUE(WaitUntil([&] {
    std::lock_guard lock(shared.mutex);
    for (const auto& [id, m] : shared.published) {
      if (m.topic.ends_with("/status") && m.payload.find("\"online\"") != std::string::npos)
        return true;
    }
    return false;
  }));
}

TEST(MqttPublisher, ACommitNotificationSendsANewAlarmWithoutWaitingForThePoll) {
  // docs/performance.md "Alarm latency": the publisher used to find new outbox rows only at its
  // poll. Here the poll is an hour, so an alarm that arrives within the test's wait was brought by
  // the trend writer's commit notification, and one written without a notification is not sent.
  const auto dir = spinward::testing::FreshTempDir("mqtt-publisher-wake");
  const auto db = dir / "trends.sqlite";
  const std::int64_t t0 = 1'772'445'600'000'000'000;  // 2026-03-02T10:00:00Z
  { ASSERT_TRUE(storage::TrendStore::Open(db.string()).ok()); }
  auto notifier = std::make_shared<OutboxNotifier>();
  auto shared = std::make_shared<FakeTransport::Shared>();
  PublisherOptions options;
  options.poll = std::chrono::hours(1);
  options.outbox_notifier = notifier;
  auto publisher =
      MqttPublisher::Start(Site(db), std::make_unique<FakeTransport>(shared), {}, options);
  ASSERT_TRUE(publisher.ok()) << publisher.message();
  ConnectAndWaitOnline(*shared);

  // The daemon's wiring: the writer's commit callback notifies the publisher.
  auto store = storage::TrendStore::Open(db.string());
  ASSERT_TRUE(store.ok()) << store.message();
  storage::WriterOptions writer_options;
  writer_options.prune_every = std::chrono::milliseconds(0);
  writer_options.on_events_committed = [notifier] { notifier->Notify(); };
  auto writer = storage::TrendWriter::Start(std::move(store).value(), writer_options);
  ASSERT_TRUE(writer.ok()) << writer.message();
  ASSERT_TRUE((*writer)->Submit(AlarmBatch("ev-1", t0, "normal", "alert")));
  ASSERT_TRUE(WaitUntil([&] { return Alarms(*shared).size() == 1; }));
  EXPECT_NE(Alarms(*shared)[0].second.payload.find("ev-1"), std::string::npos);
  shared->callbacks.on_acknowledged(Alarms(*shared)[0].first);
  ASSERT_TRUE(WaitUntil([&] { return (*publisher)->Counters().alarms_published == 1; }));

  // Written by another connection with nobody told (as by another process): it waits for the
  // poll, an hour away.
  {
    auto other = storage::TrendStore::Open(db.string());
    ASSERT_TRUE(other.ok()) << other.message();
    ASSERT_TRUE(
        other->Write(AlarmBatch("ev-2", t0 + 1'000'000'000, "alert", "danger")).status.ok());
  }
  std::this_thread::sleep_for(std::chrono::milliseconds(300));
  EXPECT_EQ(Alarms(*shared).size(), 1u);
  notifier->Notify();
  ASSERT_TRUE(WaitUntil([&] { return Alarms(*shared).size() == 2; }));
  EXPECT_NE(Alarms(*shared)[1].second.payload.find("ev-2"), std::string::npos);

  // A stopped publisher no longer listens: a later commit must not reach it (ASan would see a
  // call into the destroyed publisher).
  (*writer)->Stop();
  (*publisher)->Stop(std::chrono::milliseconds(0));
  publisher->reset();
  notifier->Notify();
}

TEST(MqttPublisher, WithoutANotificationThePollStillFindsNewAlarms) {
  // The fallback: rows written by another process (or with no notifier wired) arrive at the poll.
  const auto dir = spinward::testing::FreshTempDir("mqtt-publisher-poll");
  const auto db = dir / "trends.sqlite";
  const std::int64_t t0 = 1'772'445'600'000'000'000;  // 2026-03-02T10:00:00Z
  { ASSERT_TRUE(storage::TrendStore::Open(db.string()).ok()); }
  auto shared = std::make_shared<FakeTransport::Shared>();
  PublisherOptions options;
  options.poll = std::chrono::milliseconds(50);
  auto publisher =
      MqttPublisher::Start(Site(db), std::make_unique<FakeTransport>(shared), {}, options);
  ASSERT_TRUE(publisher.ok()) << publisher.message();
  ConnectAndWaitOnline(*shared);
  {
    auto other = storage::TrendStore::Open(db.string());
    ASSERT_TRUE(other.ok()) << other.message();
    ASSERT_TRUE(other->Write(AlarmBatch("ev-1", t0, "normal", "alert")).status.ok());
  }
  ASSERT_TRUE(WaitUntil([&] { return Alarms(*shared).size() == 1; }));
  EXPECT_NE(Alarms(*shared)[0].second.payload.find("ev-1"), std::string::npos);
  (*publisher)->Stop(std::chrono::milliseconds(0));
}

TEST(MqttPublisher, SentAlarmsPastTheRetentionAreDeletedUnsentOnesStay) {
  // messaging.sent_retention_h (docs/configuration.md): rows the broker acknowledged more than
  // that long ago are deleted, a bounded batch per pass; unsent rows stay however old; so do young
  // sent rows and the newest row (TrendStore::PruneSentOutbox). No broker is needed for it.
  const auto dir = spinward::testing::FreshTempDir("mqtt-publisher-prune");
  const auto db = dir / "trends.sqlite";
  const std::int64_t t0 = 1'772'445'600'000'000'000;  // 2026-03-02T10:00:00Z
  const std::int64_t hour = 3'600'000'000'000;
  const std::int64_t now = t0 + 100 * hour;
  {
    auto store = storage::TrendStore::Open(db.string());
    ASSERT_TRUE(store.ok()) << store.message();
    for (std::int64_t i = 1; i <= 7; ++i) {
      ASSERT_TRUE(store
                      ->Write(AlarmBatch("ev-" + std::to_string(i), t0 + i * 1'000'000'000,
                                         i % 2 ? "normal" : "alert", i % 2 ? "alert" : "normal"))
                      .status.ok());
    }
    for (const char* old : {"ev-1", "ev-2", "ev-4", "ev-5"}) {
      ASSERT_TRUE(store->MarkOutboxSent(old, t0 + hour).ok());  // 99 h before "now"
    }
    // ev-3 was never acknowledged; ev-6 was sent an hour ago; ev-7 (the newest) is unsent.
    ASSERT_TRUE(store->MarkOutboxSent("ev-6", now - hour).ok());
  }
  auto site = Site(db);
  site.messaging->sent_retention_h = 72.0;
  auto shared = std::make_shared<FakeTransport::Shared>();  // never connected
  PublisherOptions options;
  options.poll = std::chrono::milliseconds(10);
  options.now_ns = [now] { return now; };
  options.prune_batch_rows = 3;  // 4 rows to go: two passes
  auto publisher = MqttPublisher::Start(site, std::make_unique<FakeTransport>(shared), {}, options);
  ASSERT_TRUE(publisher.ok()) << publisher.message();
  ASSERT_TRUE(WaitUntil([&] { return (*publisher)->Counters().outbox_pruned == 4; }));
  (*publisher)->Stop(std::chrono::milliseconds(0));
  EXPECT_EQ((*publisher)->Counters().outbox_pruned, 4u);
  auto store = storage::TrendStore::OpenReadOnly(db.string());
  ASSERT_TRUE(store.ok()) << store.message();
  auto rows = store->OutboxAfter(0, false, 100);
  ASSERT_TRUE(rows.ok()) << rows.message();
  std::vector<std::string> left;
  for (const auto& r : *rows) left.push_back(r.event_id);
  EXPECT_EQ(left, (std::vector<std::string>{"ev-3", "ev-6", "ev-7"}));
  auto pending = store->OutboxAfter(0, true, 100);
  ASSERT_TRUE(pending.ok());
  EXPECT_EQ(pending->size(), 2u);  // ev-3 and ev-7, still to be delivered
}

TEST(MqttPublisher, TopicLevelsCannotContainWildcardsOrSeparators) {
  // MQTT 3.1.1 section 4.7.1: '/' separates levels, '+' and '#' are wildcards.
  EXPECT_EQ(TopicLevel("P-101/A #1 +x"), "P-101-A--1--x");
  EXPECT_EQ(TopicLevel(""), "-");
}

}  // namespace
}  // namespace spinward::daemon
