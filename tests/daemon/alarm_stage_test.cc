// AlarmStage between the pipelines and storage, watched through a fake BatchSubmitter: one batch
// per record holding the record with the events and states it caused (committed together, so a
// crash cannot keep an event without its record); outbox payloads that a real JSON parser accepts
// (Python's json module via /usr/bin/python3); a faulty sensor gives sensor_fault, never a machine
// alarm (alarm practice, REFERENCE_VALUES.md "Alarm practice": a sensor fault can fake an alarm);
// acknowledgement of a latched alarm, and an acknowledgement older than the alarm ignored.
//
// Limits: ISO 10816-3 group 2 flexible (or group 1 rigid) zone boundaries B/C 4.5 mm/s and C/D
// 7.1 mm/s (REFERENCE_VALUES.md, as transcribed from Annex A).
#include "spinward/daemon/alarm_stage.h"

#include <gtest/gtest.h>

#include <cstdio>
#include <fstream>
#include <string>
#include <vector>

#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

constexpr double kAlertMmS = 4.5;   // ISO 10816-3 B/C, group 2 flexible (REFERENCE_VALUES.md)
constexpr double kDangerMmS = 7.1;  // ISO 10816-3 C/D, group 2 flexible (REFERENCE_VALUES.md)
constexpr std::int64_t kSecond = 1'000'000'000;
constexpr std::int64_t kT0 = 1'780'000'000 * kSecond;

class CollectingSubmitter final : public BatchSubmitter {
 public:
  bool Submit(storage::WriteBatch batch) override {
    batches.push_back(std::move(batch));
    return true;
  }
  std::vector<storage::WriteBatch> batches;
};

PointJudgement Judgement(bool latching) {
  PointJudgement p;
  p.point_id = "P101-DE-H";
  p.sensor.full_scale = 50.0;  // 100 mV/g into +-5 V (docs/configuration.md example)
  AlarmRule rule;
  rule.point_id = p.point_id;
  rule.measure = "velocity";
  rule.unit = "mm/s";
  rule.high_alert = kAlertMmS;
  rule.high_danger = kDangerMmS;
  rule.on_delay_n = 1;
  rule.on_delay_m = 1;
  rule.latching = latching;
  p.rules.push_back(rule);
  return p;
}

storage::MeasurementRecord Record(int index, double velocity) {
  storage::MeasurementRecord r;
  r.point_id = "P101-DE-H";
  r.interval_start_ns = kT0 + index * kSecond;
  r.interval_end_ns = r.interval_start_ns + kSecond;
  r.segment_count = 17;
  r.sample_unit = "g";
  r.indicators.count = 10880;
  r.indicators.rms = 0.3;
  r.indicators.min = -1.0;
  r.indicators.max = 1.0;
  r.indicators.peak = 1.0;
  r.indicators.peak_to_peak = 2.0;
  r.indicators.crest_factor = 3.3;
  r.indicators.kurtosis = 3.0;
  r.longest_identical_run = 2;
  r.bands.push_back({"velocity", "mm/s", 10.0, 1000.0, velocity});
  return r;
}

std::unique_ptr<AlarmStage> MakeStage(CollectingSubmitter& out, bool latching) {
  auto stage = AlarmStage::Create({Judgement(latching)}, {}, out);
  EXPECT_TRUE(stage.ok()) << stage.message();
  return stage.ok() ? std::move(stage).value() : nullptr;
}

// Parses `payload` with Python's json module and prints "schema event_id to".
std::string PythonReadsPayload(const std::string& payload) {
  const auto dir = spinward::testing::FreshTempDir("alarm-stage-json");
  { std::ofstream(dir / "payload.json") << payload; }
  const auto result = spinward::testing::RunCommand(
      spinward::testing::ReferencePython() +
      " -c 'import json,sys; d=json.load(open(sys.argv[1])); "
      "print(d[\"schema\"], d[\"event_id\"], d[\"to\"], d[\"point\"], d[\"measure\"])' " +
      (dir / "payload.json").string());
  EXPECT_EQ(result.exit_code, 0) << payload;
  return result.output;
}

TEST(AlarmStage, AlertCrossingIsOneBatchWithRecordEventAndState) {
  CollectingSubmitter out;
  auto stage = MakeStage(out, /*latching=*/false);
  ASSERT_TRUE(stage);
  stage->Consume(Record(0, 2.0));  // zone B: no event
  ASSERT_EQ(out.batches.size(), 1u);
  EXPECT_TRUE(out.batches[0].events.empty());

  stage->Consume(Record(1, 5.0));  // above B/C 4.5, below C/D 7.1: alert
  ASSERT_EQ(out.batches.size(), 2u);
  const auto& batch = out.batches[1];
  ASSERT_EQ(batch.records.size(), 1u);
  EXPECT_EQ(batch.records[0].interval_start_ns, kT0 + kSecond);
  EXPECT_FALSE(batch.records[0].sensor_fault);
  ASSERT_EQ(batch.events.size(), 1u);
  const auto& event = batch.events[0];
  EXPECT_EQ(event.from_state, "normal");
  EXPECT_EQ(event.to_state, "alert");
  EXPECT_EQ(event.measure, "velocity");
  EXPECT_DOUBLE_EQ(event.value, 5.0);
  ASSERT_TRUE(event.limit.has_value());
  EXPECT_DOUBLE_EQ(*event.limit, kAlertMmS);
  bool state_found = false;
  for (const auto& s : batch.states) {
    if (s.measure != "velocity") continue;
    state_found = true;
    EXPECT_EQ(s.state, "alert");
    EXPECT_EQ(s.last_event_id, event.event_id);
    EXPECT_FALSE(s.engine_state.empty());
  }
  EXPECT_TRUE(state_found);
  EXPECT_EQ(*stage->State("P101-DE-H", "velocity"), AlarmState::kAlert);

  // The outbox payload as a consumer reads it (schema 1: docs/storage.md, "outbox").
  EXPECT_EQ(PythonReadsPayload(event.outbox_payload),
            "1 " + event.event_id + " alert P101-DE-H velocity\n");
}

TEST(AlarmStage, PayloadWithQuotesAndNewlinesStaysValidJson) {
  CollectingSubmitter out;
  PointJudgement p = Judgement(false);
  p.rules[0].unit = "mm/s \"rms\"\n\\";  // hostile unit text, escaped by the JSON writer
  auto stage = AlarmStage::Create({p}, {}, out);
  ASSERT_TRUE(stage.ok()) << stage.message();
  (*stage)->Consume(Record(0, 8.0));
  ASSERT_EQ(out.batches.size(), 1u);
  ASSERT_EQ(out.batches[0].events.size(), 1u);
  const auto& event = out.batches[0].events[0];
  EXPECT_EQ(event.to_state, "danger");
  EXPECT_EQ(PythonReadsPayload(event.outbox_payload),
            "1 " + event.event_id + " danger P101-DE-H velocity\n");
}

TEST(AlarmStage, FlatlineSensorGivesSensorFaultAndNoAlarmEvenWhenHigh) {
  CollectingSubmitter out;
  auto stage = MakeStage(out, /*latching=*/true);
  ASSERT_TRUE(stage);
  // 500 identical samples in a row: at or above the default run limit 100 (sensor_health.h,
  // common practice, no source).
  auto record = Record(0, 9.0);  // above danger 7.1 if it were believed
  record.longest_identical_run = 500;
  stage->Consume(record);
  ASSERT_EQ(out.batches.size(), 1u);
  const auto& batch = out.batches[0];
  ASSERT_EQ(batch.records.size(), 1u);
  EXPECT_TRUE(batch.records[0].sensor_fault);
  EXPECT_NE(batch.records[0].sensor_fault_reason.find("500"), std::string::npos)
      << batch.records[0].sensor_fault_reason;
  for (const auto& e : batch.events) {
    EXPECT_NE(e.to_state, "alert");
    EXPECT_NE(e.to_state, "danger");
  }
  EXPECT_EQ(*stage->State("P101-DE-H", "velocity"), AlarmState::kSensorFault);
}

TEST(AlarmStage, ClippedSamplesGiveSensorFaultAndNoAlarm) {
  CollectingSubmitter out;
  auto stage = MakeStage(out, /*latching=*/false);
  ASSERT_TRUE(stage);
  auto record = Record(0, 6.0);  // above alert 4.5 if it were believed
  record.clipped_samples = 12;   // at or above the default count 3 (common practice, no source)
  record.indicators.max = 49.9;
  stage->Consume(record);
  ASSERT_EQ(out.batches.size(), 1u);
  EXPECT_TRUE(out.batches[0].records[0].sensor_fault);
  bool saw_fault_event = false;
  for (const auto& e : out.batches[0].events) {
    EXPECT_NE(e.to_state, "alert");
    if (e.to_state == "sensor_fault") saw_fault_event = true;
  }
  EXPECT_TRUE(saw_fault_event);
  EXPECT_EQ(*stage->State("P101-DE-H", "velocity"), AlarmState::kSensorFault);
}

TEST(AlarmStage, AcknowledgementReleasesALatchedAlarmOnceValuesAreNormal) {
  CollectingSubmitter out;
  auto stage = MakeStage(out, /*latching=*/true);
  ASSERT_TRUE(stage);
  stage->Consume(Record(0, 8.0));  // danger, latched
  stage->Consume(Record(1, 1.0));  // values back in zone A/B: the latch holds
  EXPECT_EQ(*stage->State("P101-DE-H", "velocity"), AlarmState::kDanger);
  const auto batches_before = out.batches.size();
  ASSERT_TRUE(
      stage->Acknowledge("P101-DE-H", "velocity", "R. Okafor", "bearing checked", kT0 + 3 * kSecond)
          .ok());
  EXPECT_EQ(*stage->State("P101-DE-H", "velocity"), AlarmState::kNormal);
  ASSERT_EQ(out.batches.size(), batches_before + 1);
  const auto& batch = out.batches.back();
  EXPECT_TRUE(batch.records.empty());
  ASSERT_EQ(batch.events.size(), 1u);
  EXPECT_EQ(batch.events[0].from_state, "danger");
  EXPECT_EQ(batch.events[0].to_state, "normal");
  ASSERT_FALSE(batch.states.empty());
  EXPECT_FALSE(batch.states[0].latched);
  EXPECT_EQ(batch.states[0].state, "normal");
  EXPECT_NE(batch.states[0].engine_state.find("ack_by=R. Okafor"), std::string::npos)
      << batch.states[0].engine_state;
}

TEST(AlarmStage, AcknowledgementOlderThanTheAlarmIsIgnored) {
  CollectingSubmitter out;
  auto stage = MakeStage(out, /*latching=*/true);
  ASSERT_TRUE(stage);
  stage->Consume(Record(5, 8.0));  // danger raised at the end of interval 5 (kT0 + 6 s)
  stage->Consume(Record(6, 1.0));
  // Given at kT0 + 1 s, before the alarm existed (e.g. replayed from the database at start).
  const Status old = stage->Acknowledge("P101-DE-H", "velocity", "R. Okafor", "", kT0 + kSecond);
  EXPECT_FALSE(old.ok());
  EXPECT_EQ(*stage->State("P101-DE-H", "velocity"), AlarmState::kDanger);
}

TEST(AlarmStage, HighValueRepeatedRaisesOnlyOnce) {
  CollectingSubmitter out;
  auto stage = MakeStage(out, /*latching=*/true);
  ASSERT_TRUE(stage);
  for (int i = 0; i < 4; ++i) stage->Consume(Record(i, 8.0));
  std::size_t events = 0;
  for (const auto& b : out.batches) events += b.events.size();
  EXPECT_EQ(events, 1u);
  EXPECT_EQ(out.batches.size(), 4u);  // still one batch per record
}

TEST(AlarmStage, AnIntervalWritesTheStatesOfItsOwnPointOnly) {
  // Two points with the same rule. Each interval changes its own point's alarm state (the time of
  // its last data at least), never the other's: a batch must carry only the states of the point
  // whose record it holds, and each point's state still reaches storage with its own record.
  PointJudgement second = Judgement(false);
  second.point_id = "P102-DE-H";
  second.rules[0].point_id = second.point_id;
  CollectingSubmitter out;
  auto created = AlarmStage::Create({Judgement(false), second}, {}, out);
  ASSERT_TRUE(created.ok()) << created.message();
  auto& stage = *created.value();
  stage.Consume(Record(0, 2.0));
  storage::MeasurementRecord other = Record(0, 5.0);  // above B/C 4.5: alert
  other.point_id = second.point_id;
  stage.Consume(other);
  stage.Consume(Record(1, 2.0));
  ASSERT_EQ(out.batches.size(), 3u);
  const std::string points[] = {"P101-DE-H", "P102-DE-H", "P101-DE-H"};
  for (std::size_t b = 0; b < 3; ++b) {
    ASSERT_FALSE(out.batches[b].states.empty()) << "batch " << b;
    for (const auto& state : out.batches[b].states) {
      EXPECT_EQ(state.point_id, points[b]) << "batch " << b;
    }
  }
  EXPECT_EQ(out.batches[1].states[0].state, "alert");
  EXPECT_EQ(*stage.State("P101-DE-H", "velocity"), AlarmState::kNormal);
}

TEST(AlarmStage, AStaleCheckBeforeAnyDataStoresNothing) {
  // A rule that has judged no interval has no state to store: readers show its point as unknown
  // (docs/health.md) however many periodic stale checks ran before the first data.
  CollectingSubmitter out;
  auto stage = MakeStage(out, /*latching=*/false);
  ASSERT_TRUE(stage);
  stage->CheckStale(kT0);
  stage->CheckStale(kT0 + 2 * kSecond);
  EXPECT_TRUE(out.batches.empty());
  stage->Consume(Record(0, 2.0));
  ASSERT_EQ(out.batches.size(), 1u);
  ASSERT_EQ(out.batches[0].states.size(), 1u);
  EXPECT_EQ(out.batches[0].states[0].state, "normal");
}

}  // namespace
}  // namespace spinward::daemon
