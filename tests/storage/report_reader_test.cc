// The report's read side: hourly roll-ups, first hour, events, acknowledgements and spectra over a
// window, and every statement answered through an index (sqlite3's EXPLAIN QUERY PLAN).
#include "spinward/storage/report_reader.h"

#include <gtest/gtest.h>

#include <string>

#include "spinward/storage/trend_store.h"
#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::storage {
namespace {

using testing::kBaseNs;
using testing::kTenMinNs;
using testing::VelocityRecord;

constexpr std::int64_t kHourNs = 3600LL * 1000000000LL;

class ReportReaderTest : public ::testing::Test {
 protected:
  void SetUp() override {
    path_ = (spinward::testing::FreshTempDir("report_reader") / "trend.sqlite").string();
    auto store = TrendStore::Open(path_);
    ASSERT_TRUE(store.ok()) << store.message();
    WriteBatch batch;
    // Three hours of ten-minute intervals: hour 0 at 2.0 mm/s, hour 1 at 3.0, hour 2 at 4.0 with
    // one sensor-fault interval.
    for (int i = 0; i < 18; ++i) {
      batch.records.push_back(
          VelocityRecord(kBaseNs + i * kTenMinNs, 2.0 + i / 6, /*fault=*/i == 17));
    }
    AlarmEventRecord e;
    e.event_id = "ev-1";
    e.time_ns = kBaseNs + 7 * kTenMinNs;
    e.point_id = "P-101";
    e.measure = "velocity_rms_10_1000";
    e.from_state = "normal";
    e.to_state = "alert";
    e.value = 3.0;
    e.limit = 2.8;
    e.message = "alert";
    batch.events.push_back(e);
    AlarmStateRecord state;
    state.point_id = "P-101";
    state.measure = "velocity_rms_10_1000";
    state.state = "alert";
    state.since_ns = e.time_ns;
    state.last_value = 3.0;
    state.last_event_id = "ev-1";
    state.updated_ns = e.time_ns;
    batch.states.push_back(state);
    ASSERT_TRUE(store->Write(batch).status.ok());
    ASSERT_TRUE(
        store->Acknowledge("P-101", "", "night shift", "seen", kBaseNs + 9 * kTenMinNs).ok());
  }
  std::string path_;
};

TEST_F(ReportReaderTest, ReadsHourlyMeansEventsAndAcks) {
  auto reader = ReportReader::Open(path_);
  ASSERT_TRUE(reader.ok()) << reader.message();
  auto measures = reader->Measures();
  ASSERT_TRUE(measures.ok()) << measures.message();
  ASSERT_EQ(measures->size(), 1u);
  EXPECT_EQ(measures->at(0).point_id, "P-101");
  EXPECT_EQ(measures->at(0).unit, "mm/s");
  EXPECT_EQ(measures->at(0).kind, "band");

  // kBaseNs is 10:00Z, a whole hour, so the three hours are three buckets. Means by hand:
  // 6 x 2.0 -> 2.0; 6 x 3.0 -> 3.0; 5 x 4.0 (the fault interval is not averaged) -> 4.0.
  auto hours = reader->Hourly(measures->at(0).measure_pk, kBaseNs, kBaseNs + 3 * kHourNs);
  ASSERT_TRUE(hours.ok()) << hours.message();
  ASSERT_EQ(hours->size(), 3u);
  EXPECT_DOUBLE_EQ(hours->at(0).value, 2.0);
  EXPECT_DOUBLE_EQ(hours->at(1).value, 3.0);
  EXPECT_DOUBLE_EQ(hours->at(2).value, 4.0);
  EXPECT_EQ(hours->at(2).count, 5);
  EXPECT_EQ(hours->at(2).fault_count, 1);
  auto later = reader->Hourly(measures->at(0).measure_pk, kBaseNs + kHourNs, kBaseNs + 2 * kHourNs);
  ASSERT_TRUE(later.ok());
  EXPECT_EQ(later->size(), 1u);

  auto first = reader->FirstHour(measures->at(0).measure_pk);
  ASSERT_TRUE(first.ok());
  ASSERT_TRUE(first->has_value());
  EXPECT_EQ(**first, kBaseNs);

  auto events = reader->Events(kBaseNs, kBaseNs + kHourNs);
  ASSERT_TRUE(events.ok()) << events.message();
  ASSERT_EQ(events->size(), 0u);  // the event is at 11:10, outside [10:00, 11:00)
  events = reader->Events(kBaseNs, kBaseNs + 3 * kHourNs);
  ASSERT_TRUE(events.ok());
  ASSERT_EQ(events->size(), 1u);
  EXPECT_EQ(events->at(0).to_state, "alert");
  EXPECT_DOUBLE_EQ(*events->at(0).limit, 2.8);

  auto acks = reader->Acknowledgements(kBaseNs, kBaseNs + 3 * kHourNs);
  ASSERT_TRUE(acks.ok()) << acks.message();
  ASSERT_EQ(acks->size(), 1u);
  EXPECT_EQ(acks->at(0).by, "night shift");

  // The intervals of the first hour start at 10:00, 10:10 .. 10:50 and last 10 min: their
  // midpoints average 30 min after the hour.
  auto centre = reader->HourCentre(measures->at(0).measure_pk, kBaseNs);
  ASSERT_TRUE(centre.ok()) << centre.message();
  ASSERT_TRUE(centre->has_value());
  EXPECT_DOUBLE_EQ(**centre, 1800e9);
  auto empty = reader->HourCentre(measures->at(0).measure_pk, kBaseNs + 5 * kHourNs);
  ASSERT_TRUE(empty.ok());
  EXPECT_FALSE(empty->has_value());

  auto none = reader->SpectrumBefore("P-101", kBaseNs + 3 * kHourNs);
  ASSERT_TRUE(none.ok()) << none.message();
  EXPECT_FALSE(none->has_value());  // no spectrum was stored
}

TEST_F(ReportReaderTest, EveryStatementUsesAnIndexAndNeverScansALargeTable) {
  // EXPLAIN QUERY PLAN prints "SEARCH <table> USING INDEX <name>" when an index narrows the rows
  // and "SCAN <table>" for a full scan (sqlite.org/eqp.html). The small tables (points, measures,
  // alarm_state, acknowledgements, baselines: one row per point and measure) may be scanned; the large ones (trend_values, rollup_hourly,
  // alarm_events, spectra) never. Raw trend_values are read by one statement only, one hour of
  // one measure through its (measure_pk, start_ns) index.
  auto reader = ReportReader::Open(path_);
  ASSERT_TRUE(reader.ok()) << reader.message();
  auto plan = reader->ExplainAll();
  ASSERT_TRUE(plan.ok()) << plan.message();
  std::string all;
  for (const auto& line : *plan) all += line + "\n";
  std::size_t raw_lines = 0;
  for (const auto& line : *plan) {
    if (line.find("trend_values") == std::string::npos) continue;
    ++raw_lines;
    EXPECT_EQ(line,
              "hour_centre: SEARCH trend_values USING INDEX trend_values_by_measure_time "
              "(measure_pk=? AND start_ns>? AND start_ns<?)");
  }
  EXPECT_EQ(raw_lines, 1u) << all;
  for (const char* large :
       {"SCAN rollup_hourly", "SCAN alarm_events", "SCAN e", "SCAN s", "SCAN spectra"}) {
    EXPECT_EQ(all.find(std::string(large) + "\n"), std::string::npos) << large << "\n" << all;
    EXPECT_EQ(all.find(std::string(large) + " "), std::string::npos) << large << "\n" << all;
  }
  EXPECT_NE(all.find("hourly: SEARCH rollup_hourly USING INDEX rollup_hourly_by_measure_time"),
            std::string::npos)
      << all;
  EXPECT_NE(all.find("USING INDEX alarm_events_by_time"), std::string::npos) << all;
  EXPECT_NE(all.find("USING INDEX spectra_by_point_time"), std::string::npos) << all;
}

TEST(ReportReader, MissingFileIsNamed) {
  auto reader = ReportReader::Open("/nonexistent/dir/trend.sqlite");
  ASSERT_FALSE(reader.ok());
  EXPECT_NE(reader.message().find("/nonexistent/dir/trend.sqlite"), std::string::npos)
      << reader.message();
}

}  // namespace
}  // namespace spinward::storage
