// Learned baselines in the daemon's judgement and the `spinward baseline` command: the ISO 10816-3
// baseline rule takes the learned median, a measure without a configured alarm gets the learned
// statistical limits, and the command marks, learns and lists baselines in the trend database.
#include <gtest/gtest.h>

#include <string>

#include "../../daemon/src/site_judgement.h"  // private to daemon/
#include "spinward/config/site_loader.h"
#include "spinward/storage/baseline_store.h"
#include "spinward/storage/time_text.h"
#include "spinward/storage/trend_store.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

// Group 2 rigid pump (ISO 10816-3 B/C 2.8 mm/s): a velocity band under the preset with the
// standard's baseline rule, and a bearing band with no alarm.
config::SiteConfig PumpSite() {
  config::LoadedSite loaded = config::ParseSiteText(R"(site: {name: Larkfield}
machines: [{id: P-101, speed_rpm: 1480, iso_group: 2, support: rigid}]
profiles: [{id: p}]
points:
  - id: P101-DE-H
    machine: P-101
    sensor: S
    sample_rate_hz: 25600
    profile: p
    bands:
      - {name: velocity, lo_hz: 10, hi_hz: 1000, units: mm/s}
      - {name: bearing, lo_hz: 1000, hi_hz: 10000, quantity: acceleration, units: g}
    alarms: [{measure: velocity, preset: iso10816-3, baseline: 0.9}]
listeners: [{port: 0}]
)",
                                                    "pump.yaml");
  EXPECT_TRUE(loaded.ok());
  return loaded.site;
}

TEST(LearnedBaseline, IsoBaselineRuleTakesTheLearnedMedian) {
  // Learned median 1.2 mm/s: alert = 1.2 + 0.25 x 2.8 = 1.9 mm/s; danger stays at C/D 4.5 (ISO
  // 10816-3 baseline rule, see site_judgement_test.cc). Without it the configured 0.9 gives 1.6.
  auto configured = JudgementsFromSite(PumpSite(), {});
  ASSERT_TRUE(configured.ok()) << configured.message();
  ASSERT_EQ((*configured)[0].rules.size(), 1u);
  EXPECT_NEAR((*configured)[0].rules[0].high_alert, 1.6, 1e-12);
  auto learned = JudgementsFromSite(PumpSite(), {{"P101-DE-H", "velocity", 1.2, 99.0, 199.0},
                                                 {"P101-DE-H", "bearing", 0.08, 0.14, 0.2},
                                                 {"P101-DE-H", "gone", 1.0, 2.0, 3.0},
                                                 {"P-999", "velocity", 1.0, 2.0, 3.0}});
  ASSERT_TRUE(learned.ok()) << learned.message();
  const auto& rules = (*learned)[0].rules;
  ASSERT_EQ(rules.size(), 2u);  // the unknown measure and point are ignored
  EXPECT_EQ(rules[0].measure, "velocity");
  EXPECT_NEAR(rules[0].high_alert, 1.9, 1e-12);
  EXPECT_NEAR(rules[0].high_danger, 4.5, 1e-12);
  // The bearing band had no alarm: it gets the learned statistical limits, in its unit.
  EXPECT_EQ(rules[1].measure, "bearing");
  EXPECT_EQ(rules[1].unit, "g");
  EXPECT_DOUBLE_EQ(rules[1].high_alert, 0.14);
  EXPECT_DOUBLE_EQ(rules[1].high_danger, 0.2);
}

TEST(LearnedBaseline, AlarmsOnMachineAwareMeasuresBecomeRulesInTheirUnits) {
  config::LoadedSite loaded = config::ParseSiteText(R"(site: {name: Larkfield}
machines:
  - id: P-101
    speed_rpm: 1480
    vanes: 6
    bearing: {ftf: 0.398, bpfo: 3.585, bpfi: 5.415, bsf: 2.357}
profiles: [{id: p}]
points:
  - id: P101-DE-H
    machine: P-101
    sensor: S
    sample_rate_hz: 25600
    profile: p
    order_bands: [{name: vp, order: vane_pass}]
    envelope: {lo_hz: 2000, hi_hz: 4000}
    alarms:
      - {measure: env_bpfo_ratio, alert: 4, danger: 8}
      - {measure: env_bpfo, alert: 0.05, danger: 0.1}
      - {measure: vp, alert: 2, danger: 4}
      - {measure: speed_rpm, alert: 1600, danger: 1700}
listeners: [{port: 0}]
)",
                                                    "pump.yaml");
  ASSERT_TRUE(loaded.ok());
  auto judgements = JudgementsFromSite(loaded.site);
  ASSERT_TRUE(judgements.ok()) << judgements.message();
  const auto& rules = (*judgements)[0].rules;
  ASSERT_EQ(rules.size(), 4u);
  EXPECT_EQ(rules[0].unit, "");  // a ratio, like crest factor
  EXPECT_EQ(rules[1].unit, "g^2");
  EXPECT_EQ(rules[2].unit, "mm/s");
  EXPECT_EQ(rules[3].unit, "rpm");
}

TEST(LearnedBaseline, CommandMarksLearnsAndShows) {
  const auto dir = spinward::testing::FreshTempDir("baseline_command");
  const std::string db = (dir / "trend.db").string();
  const std::int64_t now = storage::WallClockNowNs();
  const std::int64_t hour = 3'600'000'000'000;
  {
    auto store = storage::TrendStore::Open(db);
    ASSERT_TRUE(store) << store.message();
    storage::WriteBatch batch;
    // Eight hourly values of one band, two days ago: median of 1..8 is 4.5; |x - 4.5| are
    // 0.5 0.5 1.5 1.5 2.5 2.5 3.5 3.5, median 2, scaled 2.9652 (by hand).
    for (int i = 0; i < 8; ++i) {
      storage::MeasurementRecord r;
      r.point_id = "P101-DE-H";
      r.interval_start_ns = now - 48 * hour + i * hour;
      r.interval_end_ns = r.interval_start_ns + hour;
      r.sample_unit = "g";
      r.bands.push_back({"velocity", "mm/s", 10.0, 1000.0, 1.0 + i});
      batch.records.push_back(r);
    }
    ASSERT_TRUE(store->Write(batch).status.ok());
  }
  const std::string binary = spinward::testing::SpinwardBinary().string();
  // --start marks a period from now: nothing to learn yet.
  auto started =
      spinward::testing::RunCommand(binary + " baseline P101-DE-H --start --period 7d --db " + db);
  EXPECT_EQ(started.exit_code, 0) << started.error_output;
  EXPECT_NE(started.output.find("learning 1 measure of P101-DE-H"), std::string::npos)
      << started.output;
  auto pending = spinward::testing::RunCommand(binary + " baseline P101-DE-H --show --db " + db);
  EXPECT_EQ(pending.exit_code, 0) << pending.error_output;
  EXPECT_NE(pending.output.find("learning"), std::string::npos) << pending.output;
  // Move the period over the stored values (as if it had been started two days ago).
  {
    auto baselines = storage::BaselineStore::Open(db);
    ASSERT_TRUE(baselines);
    ASSERT_TRUE(baselines->Start("P101-DE-H", now - 49 * hour, now - 24 * hour));
  }
  auto shown = spinward::testing::RunCommand(binary + " baseline P101-DE-H --show --db " + db);
  EXPECT_EQ(shown.exit_code, 0) << shown.error_output;
  // median 4.5, mad 2.9652, count 8, alert 4.5 + 3 x 2.9652 = 13.3956, danger 22.2912.
  for (const char* expected : {"4.5", "2.9652", " 8 ", "13.3956", "22.2912", "learned"}) {
    EXPECT_NE(shown.output.find(expected), std::string::npos) << expected << "\n" << shown.output;
  }
  auto bad = spinward::testing::RunCommand(binary + " baseline P101-DE-H --db " + db);
  EXPECT_EQ(bad.exit_code, 2);
}

}  // namespace
}  // namespace spinward::daemon
