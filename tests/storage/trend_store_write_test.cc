// Writing batches and reading them back: roll-ups, idempotent retries, atomicity of alarm events
// with their outbox rows, retention pruning, index use, status, alarms and acknowledgements.
#include <gtest/gtest.h>

#include <cmath>

#include "spinward/storage/trend_store.h"
#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::storage {
namespace {

using testing::kBaseNs;
using testing::kTenMinNs;
using testing::RawConnection;
using testing::VelocityRecord;

constexpr std::int64_t kDayNs = 86400LL * 1000000000LL;

// The same series as tests/data/storage/schema_v1_larkfield.sql: nine 10-minute intervals from
// 10:00Z, the fourth a sensor fault.
WriteBatch LarkfieldSeries() {
  const double values[] = {2.31, 2.45, 2.38, 9.99, 2.52, 2.41, 2.60, 2.71, 2.66};
  WriteBatch batch;
  for (int i = 0; i < 9; ++i) {
    batch.records.push_back(VelocityRecord(kBaseNs + i * kTenMinNs, values[i], i == 3));
  }
  return batch;
}

AlarmEventRecord AlertEvent(const std::string& id, std::int64_t time_ns) {
  AlarmEventRecord e;
  e.event_id = id;
  e.time_ns = time_ns;
  e.point_id = "P-101";
  e.measure = "velocity_rms_10_1000";
  e.from_state = "normal";
  e.to_state = "alert";
  e.value = 2.71;
  e.limit = 2.7;
  e.message = "P-101 velocity 2.71 mm/s above alert 2.7 mm/s";
  return e;
}

AlarmStateRecord AlertState(std::int64_t time_ns, bool latched,
                            const std::string& state = "alert") {
  AlarmStateRecord a;
  a.point_id = "P-101";
  a.measure = "velocity_rms_10_1000";
  a.state = state;
  a.since_ns = time_ns;
  a.latched = latched;
  a.last_value = 2.71;
  a.last_event_id = "lf-1";
  a.updated_ns = time_ns;
  return a;
}

class TrendStoreWrite : public ::testing::Test {
 protected:
  void SetUp() override {
    path_ = spinward::testing::FreshTempDir(
                ::testing::UnitTest::GetInstance()->current_test_info()->name()) /
            "larkfield.db";
    auto store = TrendStore::Open(path_.string(), options_);
    ASSERT_TRUE(store.ok()) << store.message();
    store_ = std::make_unique<TrendStore>(std::move(*store));
  }
  std::filesystem::path path_;
  StoreOptions options_;
  std::unique_ptr<TrendStore> store_;
};

TEST_F(TrendStoreWrite, RollupsMatchIndependentStatistics) {
  auto outcome = store_->Write(LarkfieldSeries());
  ASSERT_TRUE(outcome.status.ok()) << outcome.status.message();
  EXPECT_EQ(outcome.intervals_written, 9u);

  TrendQuery query{"P-101", "velocity_rms_10_1000"};
  query.level = TrendLevel::kHourly;
  auto hourly = store_->Trend(query);
  ASSERT_TRUE(hourly.ok()) << hourly.message();
  ASSERT_EQ(hourly->size(), 2u);
  // Python statistics (min, fmean, max, len) of the non-fault values per hour:
  // hour 10 [2.31, 2.45, 2.38, 2.52, 2.41] -> 2.31, 2.414, 2.52, 5;
  // hour 11 [2.60, 2.71, 2.66] -> 2.6, 2.6566666666666667, 2.71, 3.
  EXPECT_DOUBLE_EQ(hourly->at(0).min, 2.31);
  EXPECT_NEAR(hourly->at(0).value, 2.414, 1e-12);
  EXPECT_DOUBLE_EQ(hourly->at(0).max, 2.52);
  EXPECT_EQ(hourly->at(0).count, 5);
  EXPECT_EQ(hourly->at(0).fault_count, 1);
  EXPECT_EQ(hourly->at(1).start_ns, kBaseNs + 3600LL * 1000000000LL);
  EXPECT_DOUBLE_EQ(hourly->at(1).min, 2.6);
  EXPECT_NEAR(hourly->at(1).value, 2.6566666666666667, 1e-12);
  EXPECT_DOUBLE_EQ(hourly->at(1).max, 2.71);
  EXPECT_EQ(hourly->at(1).count, 3);

  // Daily: all eight non-fault values -> 2.31, 2.505, 2.71, 8 (Python statistics).
  query.level = TrendLevel::kDaily;
  auto daily = store_->Trend(query);
  ASSERT_TRUE(daily.ok()) << daily.message();
  ASSERT_EQ(daily->size(), 1u);
  EXPECT_EQ(daily->at(0).start_ns, kBaseNs - 10 * 3600LL * 1000000000LL);  // 00:00Z that day
  EXPECT_DOUBLE_EQ(daily->at(0).min, 2.31);
  EXPECT_NEAR(daily->at(0).value, 2.505, 1e-12);
  EXPECT_DOUBLE_EQ(daily->at(0).max, 2.71);
  EXPECT_EQ(daily->at(0).count, 8);
  EXPECT_EQ(daily->at(0).fault_count, 1);
}

TEST_F(TrendStoreWrite, RepeatedBatchIsStoredOnce) {
  // A batch retried after a crash between commit and report must not count twice.
  ASSERT_TRUE(store_->Write(LarkfieldSeries()).status.ok());
  auto again = store_->Write(LarkfieldSeries());
  ASSERT_TRUE(again.status.ok()) << again.status.message();
  EXPECT_EQ(again.intervals_written, 0u);
  TrendQuery query{"P-101", "velocity_rms_10_1000"};
  query.level = TrendLevel::kDaily;
  EXPECT_EQ(store_->Trend(query)->at(0).count, 8);
}

TEST_F(TrendStoreWrite, IndicatorsBecomeMeasuresWithUnits) {
  auto record = VelocityRecord(kBaseNs, 2.3);
  record.indicators.count = 51200;
  record.indicators.rms = 4.1;
  record.indicators.crest_factor = 3.2;
  ASSERT_TRUE(store_->Write({{record}, {}, {}}).status.ok());
  auto status = store_->CurrentStatus();
  ASSERT_TRUE(status.ok()) << status.message();
  ASSERT_EQ(status->size(), 7u);  // one band + six indicators
  for (const auto& row : *status) {
    if (row.measure == "overall_rms") {
      EXPECT_EQ(row.unit, "m/s^2");
    }
    if (row.measure == "overall_crest_factor") {
      EXPECT_EQ(row.unit, "1");
      EXPECT_DOUBLE_EQ(*row.latest_value, 3.2);
    }
  }
}

TEST_F(TrendStoreWrite, UnitChangeAndNonFiniteValuesAreSkippedWithWarnings) {
  ASSERT_TRUE(store_->Write({{VelocityRecord(kBaseNs, 2.3)}, {}, {}}).status.ok());
  auto changed = VelocityRecord(kBaseNs + kTenMinNs, 0.09);
  changed.bands[0].unit = "in/s";
  auto nan = VelocityRecord(kBaseNs + 2 * kTenMinNs, std::nan(""));
  auto outcome = store_->Write({{changed, nan}, {}, {}});
  ASSERT_TRUE(outcome.status.ok()) << outcome.status.message();
  EXPECT_EQ(outcome.intervals_written, 0u);
  ASSERT_EQ(outcome.warnings.size(), 2u);
  EXPECT_NE(outcome.warnings[0].find("'mm/s' but the record says 'in/s'"), std::string::npos);
  EXPECT_NE(outcome.warnings[1].find("non-finite"), std::string::npos);
}

TEST_F(TrendStoreWrite, AlarmEventEntersOutboxInTheSameTransaction) {
  WriteBatch batch = LarkfieldSeries();
  batch.events.push_back(AlertEvent("lf-1", kBaseNs + 7 * kTenMinNs));
  batch.states.push_back(AlertState(kBaseNs + 7 * kTenMinNs, true));
  auto outcome = store_->Write(batch);
  ASSERT_TRUE(outcome.status.ok()) << outcome.status.message();
  EXPECT_EQ(outcome.events_written, 1u);
  auto pending = store_->PendingOutbox(10);
  ASSERT_TRUE(pending.ok()) << pending.message();
  ASSERT_EQ(pending->size(), 1u);
  EXPECT_EQ(pending->at(0).first, "lf-1");
  EXPECT_NE(pending->at(0).second.find("\"to\":\"alert\""), std::string::npos)
      << pending->at(0).second;
  EXPECT_NE(pending->at(0).second.find("\"limit\":2.7"), std::string::npos)
      << pending->at(0).second;
}

TEST_F(TrendStoreWrite, FailingOutboxInsertLeavesNeitherEventNorRecords) {
  // Another connection (foreign keys off: SQLite enforces them only where PRAGMA foreign_keys is
  // ON, per its documentation) plants an outbox row with the event id, so the batch's outbox
  // insert hits the UNIQUE constraint after its records and its event row were inserted.
  {
    RawConnection raw(path_);
    ASSERT_EQ(
        raw.Exec("INSERT INTO outbox (event_id, payload, created_ns) VALUES ('lf-dup', '{}', 0)"),
        SQLITE_OK);
  }
  WriteBatch batch = LarkfieldSeries();
  batch.events.push_back(AlertEvent("lf-dup", kBaseNs));
  auto outcome = store_->Write(batch);
  ASSERT_FALSE(outcome.status.ok());
  EXPECT_FALSE(outcome.retryable);
  EXPECT_NE(outcome.status.message().find("outbox"), std::string::npos) << outcome.status.message();

  RawConnection raw(path_);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM alarm_events"), 0);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM trend_values"), 0);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM rollup_hourly"), 0);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM points"), 0);
}

TEST_F(TrendStoreWrite, AlarmStateSurvivesReopen) {
  WriteBatch batch;
  batch.events.push_back(AlertEvent("lf-1", kBaseNs));
  batch.states.push_back(AlertState(kBaseNs, true));
  ASSERT_TRUE(store_->Write(batch).status.ok());
  store_.reset();
  auto reopened = TrendStore::Open(path_.string());
  ASSERT_TRUE(reopened.ok()) << reopened.message();
  auto states = reopened->LoadAlarmStates();
  ASSERT_TRUE(states.ok());
  ASSERT_EQ(states->size(), 1u);
  EXPECT_EQ(states->at(0).state, "alert");
  EXPECT_TRUE(states->at(0).latched);
  EXPECT_EQ(states->at(0).since_ns, kBaseNs);
  EXPECT_EQ(states->at(0).last_event_id, "lf-1");
}

TEST_F(TrendStoreWrite, EngineSnapshotTextSurvivesReopenByteForByte) {
  // Schema v3 keeps the alarm engine's snapshot verbatim; escapes and newlines included.
  const std::string snapshot = "version=1\npoint=P-101\nsensor_fault_reason=a\\nb\n";
  WriteBatch batch;
  batch.events.push_back(AlertEvent("lf-1", kBaseNs));
  auto state = AlertState(kBaseNs, true);
  state.engine_state = snapshot;
  batch.states.push_back(state);
  ASSERT_TRUE(store_->Write(batch).status.ok());
  store_.reset();
  auto reopened = TrendStore::Open(path_.string());
  ASSERT_TRUE(reopened.ok()) << reopened.message();
  auto states = reopened->LoadAlarmStates();
  ASSERT_TRUE(states.ok()) << states.message();
  ASSERT_EQ(states->size(), 1u);
  EXPECT_EQ(states->at(0).engine_state, snapshot);
}

TEST_F(TrendStoreWrite, AlarmsOpenOnlyAndAcknowledge) {
  WriteBatch batch;
  batch.events.push_back(AlertEvent("lf-1", kBaseNs));
  auto back = AlertEvent("lf-2", kBaseNs + kTenMinNs);
  back.from_state = "alert";
  back.to_state = "normal";
  batch.events.push_back(back);
  batch.states.push_back(AlertState(kBaseNs + kTenMinNs, true, "normal"));  // back, but latched
  ASSERT_TRUE(store_->Write(batch).status.ok());

  auto all = store_->Alarms(0, false);
  ASSERT_TRUE(all.ok()) << all.message();
  EXPECT_EQ(all->size(), 2u);
  auto open = store_->Alarms(0, true);
  ASSERT_TRUE(open.ok()) << open.message();
  ASSERT_EQ(open->size(), 1u);  // the latest event of the still-latched measure
  EXPECT_EQ(open->at(0).event_id, "lf-2");

  auto acked = store_->Acknowledge("P-101", "", "operator R. Okafor", "bearing greased",
                                   kBaseNs + 2 * kTenMinNs);
  ASSERT_TRUE(acked.ok()) << acked.message();
  EXPECT_EQ(*acked, 1);
  EXPECT_TRUE(store_->Alarms(0, true)->empty());  // latch released: state was back to normal
  auto states = store_->LoadAlarmStates();
  EXPECT_FALSE(states->at(0).latched);
  EXPECT_EQ(states->at(0).ack_by, "operator R. Okafor");
  auto acks = store_->AcknowledgementsAfter(0);
  ASSERT_EQ(acks->size(), 1u);
  EXPECT_EQ(acks->at(0).note, "bearing greased");

  auto nothing = store_->Acknowledge("P-101", "", "operator", "", kBaseNs);
  ASSERT_FALSE(nothing.ok());
  EXPECT_NE(nothing.message().find("no alarm or latch"), std::string::npos) << nothing.message();
  auto unknown = store_->Acknowledge("P-999", "", "operator", "", kBaseNs);
  ASSERT_FALSE(unknown.ok());
  EXPECT_NE(unknown.message().find("P-999"), std::string::npos) << unknown.message();
}

TEST_F(TrendStoreWrite, StatusShowsLatestValueAndAlarm) {
  WriteBatch batch = LarkfieldSeries();
  batch.records.push_back(VelocityRecord(kBaseNs, 1.10, false, "F-201"));
  batch.states.push_back(AlertState(kBaseNs, false));
  ASSERT_TRUE(store_->Write(batch).status.ok());
  auto status = store_->CurrentStatus();
  ASSERT_TRUE(status.ok()) << status.message();
  ASSERT_EQ(status->size(), 2u);
  EXPECT_EQ(status->at(0).point_id, "F-201");
  EXPECT_DOUBLE_EQ(*status->at(0).latest_value, 1.10);
  EXPECT_FALSE(status->at(0).alarm.has_value());
  EXPECT_EQ(status->at(1).point_id, "P-101");
  EXPECT_DOUBLE_EQ(*status->at(1).latest_value, 2.66);  // the last of the series
  EXPECT_EQ(status->at(1).latest_start_ns, kBaseNs + 8 * kTenMinNs);
  ASSERT_TRUE(status->at(1).alarm.has_value());
  EXPECT_EQ(status->at(1).alarm->state, "alert");
}

TEST_F(TrendStoreWrite, TrendQueryUsesTheIndex) {
  // EXPLAIN QUERY PLAN prints "SEARCH <table> USING INDEX <name> (<constraints>)" when an index
  // narrows the rows (sqlite.org/eqp.html), and "SCAN <table>" for a full scan.
  ASSERT_TRUE(store_->Write(LarkfieldSeries()).status.ok());
  struct Case {
    TrendLevel level;
    const char* index;
  };
  for (auto [level, index] : {Case{TrendLevel::kRaw, "trend_values_by_measure_time"},
                              Case{TrendLevel::kHourly, "rollup_hourly_by_measure_time"},
                              Case{TrendLevel::kDaily, "rollup_daily_by_measure_time"}}) {
    auto plan = store_->ExplainTrendQuery(level);
    ASSERT_TRUE(plan.ok()) << plan.message();
    ASSERT_FALSE(plan->empty());
    std::string all;
    for (const auto& line : *plan) all += line + "\n";
    EXPECT_NE(all.find(std::string("USING INDEX ") + index), std::string::npos) << all;
    EXPECT_EQ(all.find("SCAN"), std::string::npos) << all;
    EXPECT_EQ(all.find("TEMP B-TREE"), std::string::npos) << all;  // no sort step: index order
  }
}

TEST_F(TrendStoreWrite, UnknownPointOrMeasureIsNamed) {
  ASSERT_TRUE(store_->Write(LarkfieldSeries()).status.ok());
  auto no_point = store_->Trend({"P-999", "velocity_rms_10_1000"});
  ASSERT_FALSE(no_point.ok());
  EXPECT_NE(no_point.message().find("'P-999'"), std::string::npos) << no_point.message();
  auto no_measure = store_->Trend({"P-101", "accel_peak"});
  ASSERT_FALSE(no_measure.ok());
  EXPECT_NE(no_measure.message().find("has: velocity_rms_10_1000"), std::string::npos)
      << no_measure.message();
}

TEST(TrendStoreRetention, PrunesInSmallBatchesAndKeepsRollups) {
  auto path = spinward::testing::FreshTempDir("retention") / "larkfield.db";
  StoreOptions options;
  options.retention.raw_days = 7;
  options.retention.hourly_days = 30;
  options.retention.prune_batch_rows = 4;
  auto store = TrendStore::Open(path.string(), options);
  ASSERT_TRUE(store.ok()) << store.message();
  // 20 intervals 40 days old, 10 intervals 10 days old, 3 from today.
  const std::int64_t now = kBaseNs;
  WriteBatch batch;
  for (int i = 0; i < 20; ++i)
    batch.records.push_back(VelocityRecord(now - 40 * kDayNs + i * kTenMinNs, 2.0));
  for (int i = 0; i < 10; ++i)
    batch.records.push_back(VelocityRecord(now - 10 * kDayNs + i * kTenMinNs, 2.2));
  for (int i = 0; i < 3; ++i)
    batch.records.push_back(VelocityRecord(now - 3 * kTenMinNs + i * kTenMinNs, 2.4));
  ASSERT_TRUE(store->Write(batch).status.ok());

  auto first = store->PruneStep(now);
  ASSERT_TRUE(first.ok()) << first.message();
  EXPECT_EQ(first->raw_rows, 4);  // never more than prune_batch_rows per step
  std::int64_t raw_total = first->raw_rows;
  std::int64_t hourly_total = first->hourly_rows;
  for (int step = 0; step < 100; ++step) {
    auto report = store->PruneStep(now);
    ASSERT_TRUE(report.ok()) << report.message();
    EXPECT_LE(report->raw_rows, 4);
    raw_total += report->raw_rows;
    hourly_total += report->hourly_rows;
    if (report->total() == 0) break;
  }
  EXPECT_EQ(raw_total, 30);  // everything older than 7 days
  // The 40-day-old intervals (10:00Z-13:10Z local to that day) fill 4 hourly buckets; they are
  // older than 30 days. The 10-day-old ones stay as roll-ups.
  EXPECT_EQ(hourly_total, 4);
  RawConnection raw(path);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM trend_values"), 3);
  EXPECT_EQ(raw.Int("SELECT sum(count) FROM rollup_hourly"), 13);
  EXPECT_EQ(raw.Int("SELECT sum(count) FROM rollup_daily"), 33);  // daily: kept forever
}

}  // namespace
}  // namespace spinward::storage
