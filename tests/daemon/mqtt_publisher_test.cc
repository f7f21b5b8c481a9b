// MqttPublisher's delivery logic over a fake transport and a real trend database: alarms leave the
// outbox one at a time, oldest first, are marked sent only after their PUBACK, and the oldest
// unacknowledged one is published again after a reconnect (at-least-once delivery, MQTT 3.1.1
// section 4.3.2 and 4.6: QoS 1 messages in order, duplicates possible). Status and retained state
// messages follow docs/messaging.md. The real-broker behaviour is in messaging_broker_test.cc.
#include "spinward/daemon/mqtt_publisher.h"

#include <gtest/gtest.h>

#include <mutex>

#include "daemon/wait_until.h"
#include "spinward/storage/trend_store.h"
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

TEST(MqttPublisher, TopicLevelsCannotContainWildcardsOrSeparators) {
  // MQTT 3.1.1 section 4.7.1: '/' separates levels, '+' and '#' are wildcards.
  EXPECT_EQ(TopicLevel("P-101/A #1 +x"), "P-101-A--1--x");
  EXPECT_EQ(TopicLevel(""), "-");
}

}  // namespace
}  // namespace spinward::daemon
