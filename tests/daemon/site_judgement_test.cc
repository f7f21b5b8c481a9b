// The daemon's mapping of a loaded site onto alarm rules, sensor-check thresholds and trend-store
// options. ISO 10816-3:2009 zone boundaries (Annex A, Tables A.1/A.2, RMS velocity mm/s, as
// transcribed in secondary sources; they agree with memory of the standard):
//   group 1 rigid B/C 4.5, C/D 7.1; group 1 flexible 7.1, 11.0;
//   group 2 rigid 2.8, 4.5;          group 2 flexible 4.5, 7.1.
// The standard's baseline rule: alert = baseline + 0.25 x (B/C), normally not above 1.25 x (B/C).
#include "../../daemon/src/site_judgement.h"  // private to daemon/

#include <gtest/gtest.h>

#include <string>

#include "spinward/config/demo_site.h"
#include "spinward/config/site_loader.h"
#include "spinward/daemon/alarm_rule.h"
#include "spinward/storage/trend_store.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

std::string Problems(const config::LoadedSite& loaded) {
  std::string text;
  for (const auto& problem : loaded.problems) text += problem.ToString() + "\n";
  return text;
}

config::SiteConfig Load(const std::string& text) {
  config::LoadedSite loaded = config::ParseSiteText(text, "judgement.yaml");
  EXPECT_TRUE(loaded.ok()) << Problems(loaded);
  return loaded.site;
}

// One machine of the given ISO class with one point whose velocity band carries the preset.
std::string PresetSite(int group, const char* support, const std::string& alarm_extra = "") {
  return "site: {name: x}\n"
         "machines: [{id: M, speed_rpm: 1480, iso_group: " +
         std::to_string(group) + ", support: " + support +
         "}]\n"
         "profiles: [{id: p}]\n"
         "points:\n"
         "  - id: A\n"
         "    machine: M\n"
         "    sensor: S\n"
         "    sample_rate_hz: 25600\n"
         "    profile: p\n"
         "    bands: [{name: velocity, lo_hz: 10, hi_hz: 1000, units: mm/s}]\n"
         "    alarms: [{measure: velocity, preset: iso10816-3" +
         alarm_extra +
         "}]\n"
         "listeners: [{port: 0}]\n";
}

const AlarmRule& OnlyRule(const std::vector<PointJudgement>& judgements) {
  EXPECT_EQ(judgements.size(), 1u);
  EXPECT_EQ(judgements.at(0).rules.size(), 1u);
  return judgements.at(0).rules.at(0);
}

TEST(SiteJudgement, IsoPresetTakesZoneBoundariesOfTheMachineClass) {
  struct Case {
    int group;
    const char* support;
    double alert;   // B/C
    double danger;  // C/D
  };
  // ISO 10816-3:2009 Annex A (see the file comment).
  const Case cases[] = {
      {2, "rigid", 2.8, 4.5},
      {2, "flexible", 4.5, 7.1},
      {1, "rigid", 4.5, 7.1},
      {1, "flexible", 7.1, 11.0},
  };
  for (const auto& c : cases) {
    SCOPED_TRACE(std::to_string(c.group) + " " + c.support);
    auto judgements = JudgementsFromSite(Load(PresetSite(c.group, c.support)));
    ASSERT_TRUE(judgements.ok()) << judgements.message();
    const AlarmRule& rule = OnlyRule(*judgements);
    EXPECT_EQ(rule.point_id, "A");
    EXPECT_EQ(rule.measure, "velocity");
    EXPECT_EQ(rule.unit, "mm/s");
    EXPECT_DOUBLE_EQ(rule.high_alert, c.alert);
    EXPECT_DOUBLE_EQ(rule.high_danger, c.danger);
  }
}

TEST(SiteJudgement, IsoBaselineRule) {
  // Group 2 rigid, baseline 0.9 mm/s: 0.9 + 0.25 x 2.8 = 1.6 mm/s (ISO 10816-3 example values as
  // transcribed); danger stays at C/D 4.5.
  auto judgements = JudgementsFromSite(Load(PresetSite(2, "rigid", ", baseline: 0.9")));
  ASSERT_TRUE(judgements.ok()) << judgements.message();
  const AlarmRule& rule = OnlyRule(*judgements);
  EXPECT_NEAR(rule.high_alert, 1.6, 1e-12);
  EXPECT_DOUBLE_EQ(rule.high_danger, 4.5);
  // A high baseline meets the cap 1.25 x 2.8 = 3.5 mm/s (the standard's "normally not above").
  auto capped = JudgementsFromSite(Load(PresetSite(2, "rigid", ", baseline: 3.0")));
  ASSERT_TRUE(capped.ok()) << capped.message();
  EXPECT_NEAR(OnlyRule(*capped).high_alert, 3.5, 1e-12);
}

TEST(SiteJudgement, LimitSetKeysReachTheRule) {
  config::SiteConfig site =
      Load(PresetSite(2, "rigid",
                      ", on_delay: 2 of 3, off_delay: 2, latching: true, deadband: 0.1, "
                      "stale_after_s: 1.5, low_alert: 0.05, low_danger: 0.01"));
  auto judgements = JudgementsFromSite(site);
  ASSERT_TRUE(judgements.ok()) << judgements.message();
  const AlarmRule& rule = OnlyRule(*judgements);
  EXPECT_EQ(rule.on_delay_n, 2);
  EXPECT_EQ(rule.on_delay_m, 3);
  EXPECT_EQ(rule.off_delay_intervals, 2);
  EXPECT_TRUE(rule.latching);
  EXPECT_EQ(rule.deadband_kind, DeadbandKind::kAbsolute);
  EXPECT_EQ(rule.deadband, 0.1);
  EXPECT_EQ(rule.stale_after_ns, 1500000000);  // 1.5 s in ns
  EXPECT_EQ(rule.low_alert, 0.05);
  EXPECT_EQ(rule.low_danger, 0.01);

  // Defaults when nothing is given: 5 % deadband, 1 of 1, off at once, not latching, no stale.
  auto plain = JudgementsFromSite(Load(PresetSite(2, "rigid")));
  ASSERT_TRUE(plain.ok()) << plain.message();
  const AlarmRule& defaults = OnlyRule(*plain);
  EXPECT_EQ(defaults.deadband_kind, DeadbandKind::kPercent);
  EXPECT_EQ(defaults.deadband, 5.0);
  EXPECT_EQ(defaults.on_delay_n, 1);
  EXPECT_EQ(defaults.on_delay_m, 1);
  EXPECT_EQ(defaults.off_delay_intervals, 1);
  EXPECT_FALSE(defaults.latching);
  EXPECT_EQ(defaults.stale_after_ns, 0);
}

TEST(SiteJudgement, UnitsFollowTheMeasure) {
  config::SiteConfig site = Load(
      "site: {name: x}\n"
      "machines: [{id: M, speed_rpm: 1480}]\n"
      "profiles: [{id: p}]\n"
      "points:\n"
      "  - id: A\n"
      "    machine: M\n"
      "    sensor: S\n"
      "    units: m/s^2\n"
      "    sample_rate_hz: 25600\n"
      "    profile: p\n"
      "    bands: [{name: v, lo_hz: 10, hi_hz: 1000, units: in/s}]\n"
      "    alarms:\n"
      "      - {measure: v, alert: 0.18, danger: 0.28}\n"
      "      - {measure: overall_rms, alert: 5, danger: 10}\n"
      "      - {measure: overall_crest_factor, alert: 6, danger: 8}\n"
      "      - {measure: overall_kurtosis, alert: 4, danger: 6}\n"
      "      - {measure: overall_peak_to_peak, alert: 20, danger: 40}\n"
      "listeners: [{port: 0}]\n");
  auto judgements = JudgementsFromSite(site);
  ASSERT_TRUE(judgements.ok()) << judgements.message();
  ASSERT_EQ(judgements->size(), 1u);
  const auto& rules = judgements->front().rules;
  ASSERT_EQ(rules.size(), 5u);
  EXPECT_EQ(rules[0].unit, "in/s");   // the band's unit
  EXPECT_EQ(rules[1].unit, "m/s^2");  // the sample unit
  EXPECT_EQ(rules[2].unit, "");       // ratios have none
  EXPECT_EQ(rules[3].unit, "");
  EXPECT_EQ(rules[4].unit, "m/s^2");
  EXPECT_EQ(rules[0].high_alert, 0.18);
  EXPECT_EQ(rules[0].high_danger, 0.28);
}

TEST(SiteJudgement, SensorChecksMapOntoHealthOptions) {
  config::SiteConfig site = Load(PresetSite(2, "rigid"));
  site.points[0].sensor_checks.full_scale = 50.0;
  site.points[0].sensor_checks.clip_count = 5;
  site.points[0].sensor_checks.noise_floor_rms = 0.0005;
  site.points[0].sensor_checks.identical_run = 200;
  site.points[0].sensor_checks.mean_window = config::ValueRange{-0.5, 0.5};
  site.points[0].sensor_checks.max_sequence_gaps = 1;
  auto judgements = JudgementsFromSite(site);
  ASSERT_TRUE(judgements.ok()) << judgements.message();
  const SensorHealthOptions& sensor = judgements->front().sensor;
  EXPECT_EQ(sensor.full_scale, 50.0);
  EXPECT_EQ(sensor.clip_count_limit, 5u);
  EXPECT_EQ(sensor.noise_floor_rms, 0.0005);
  EXPECT_EQ(sensor.identical_run_limit, 200u);
  ASSERT_TRUE(sensor.mean_window.has_value());
  EXPECT_EQ(sensor.mean_window->low, -0.5);
  EXPECT_EQ(sensor.mean_window->high, 0.5);
  EXPECT_EQ(sensor.max_sequence_gaps, 1u);

  // Without sensor_checks the daemon's own defaults apply: the config defaults must agree.
  auto plain = JudgementsFromSite(Load(PresetSite(2, "rigid")));
  ASSERT_TRUE(plain.ok()) << plain.message();
  const SensorHealthOptions defaults;
  EXPECT_FALSE(plain->front().sensor.full_scale.has_value());
  EXPECT_EQ(plain->front().sensor.clip_count_limit, defaults.clip_count_limit);
  EXPECT_EQ(plain->front().sensor.identical_run_limit, defaults.identical_run_limit);
  EXPECT_EQ(plain->front().sensor.max_sequence_gaps, defaults.max_sequence_gaps);
}

TEST(SiteJudgement, RuleTheLoaderCannotCheckIsRefusedWithItsPlace) {
  // A low limit above the preset's alert: the loader does not know the ISO table, the rule's own
  // Validate does (group 2 rigid alert 2.8 mm/s).
  auto judgements = JudgementsFromSite(Load(PresetSite(2, "rigid", ", low_alert: 3")));
  ASSERT_FALSE(judgements.ok());
  EXPECT_NE(judgements.message().find("A/velocity"), std::string::npos) << judgements.message();
  EXPECT_NE(judgements.message().find("low_alert (3) must be below high_alert (2.8)"),
            std::string::npos)
      << judgements.message();
}

TEST(SiteJudgement, ConfigAndDaemonAgreeOnNamesAndBounds) {
  // config/ cannot include the daemon or storage, so it keeps its own copies of these.
  EXPECT_EQ(config::kMaxOnDelayWindow, AlarmRule::kMaxOnDelayWindow);
  ASSERT_EQ(std::size(config::kOverallMeasures), std::size(storage::kIndicatorMeasures));
  for (std::size_t i = 0; i < std::size(config::kOverallMeasures); ++i) {
    EXPECT_EQ(config::kOverallMeasures[i].name, storage::kIndicatorMeasures[i].name);
    EXPECT_EQ(config::kOverallMeasures[i].dimensionless,
              storage::kIndicatorMeasures[i].dimensionless);
  }
  EXPECT_EQ(config::kOverallMeasures[0].name, kMeasureOverallRms);
  EXPECT_EQ(config::kOverallMeasures[3].name, kMeasureOverallCrestFactor);
}

TEST(SiteJudgement, StoreOptionsFromStorageSection) {
  config::SiteConfig site = Load(PresetSite(2, "rigid") +
                                 "storage:\n"
                                 "  retention: {raw_days: 30, hourly_days: 730, daily_days: 3650,"
                                 " spectrum_days: 14}\n"
                                 "  spectrum_every_s: 900\n"
                                 "  durability: normal\n");
  storage::StoreOptions options = StoreOptionsFromSite(site);
  EXPECT_FALSE(options.synchronous_full);  // normal: SQLite synchronous NORMAL
  EXPECT_EQ(options.spectrum_spacing_ns, 900LL * 1000000000LL);
  EXPECT_EQ(options.retention.raw_days, 30);
  EXPECT_EQ(options.retention.hourly_days, 730);
  EXPECT_EQ(options.retention.daily_days, 3650);
  EXPECT_EQ(options.retention.spectrum_days, 14);
  EXPECT_TRUE(options.Validate().ok()) << options.Validate().message();

  // Defaults: the storage layer's own defaults (full sync, hourly spectra, 90/1095/forever/90).
  storage::StoreOptions defaults = StoreOptionsFromSite(Load(PresetSite(2, "rigid")));
  const storage::StoreOptions expected;
  EXPECT_TRUE(defaults.synchronous_full);
  EXPECT_EQ(defaults.spectrum_spacing_ns, expected.spectrum_spacing_ns);
  EXPECT_EQ(defaults.retention.raw_days, expected.retention.raw_days);
  EXPECT_EQ(defaults.retention.hourly_days, expected.retention.hourly_days);
  EXPECT_EQ(defaults.retention.daily_days, expected.retention.daily_days);
  EXPECT_EQ(defaults.retention.spectrum_days, expected.retention.spectrum_days);
}

TEST(SiteJudgement, DemoSiteGetsTheIsoLimitsOfItsMachines) {
  config::SiteConfig site = Load(config::DemoSiteYaml());
  auto judgements = JudgementsFromSite(site);
  ASSERT_TRUE(judgements.ok()) << judgements.message();
  ASSERT_EQ(judgements->size(), 8u);
  for (const auto& judgement : *judgements) {
    SCOPED_TRACE(judgement.point_id);
    ASSERT_EQ(judgement.rules.size(), 2u);
    const AlarmRule& velocity = judgement.rules[0];
    const bool fan = judgement.point_id.rfind("F201", 0) == 0;
    // ISO 10816-3 group 2: rigid pumps 2.8 / 4.5 mm/s, the flexible fan 4.5 / 7.1 mm/s.
    EXPECT_DOUBLE_EQ(velocity.high_alert, fan ? 4.5 : 2.8);
    EXPECT_DOUBLE_EQ(velocity.high_danger, fan ? 7.1 : 4.5);
    EXPECT_EQ(velocity.on_delay_n, 2);
    EXPECT_EQ(velocity.on_delay_m, 3);
    EXPECT_EQ(velocity.off_delay_intervals, 2);
    EXPECT_TRUE(velocity.latching);
    const AlarmRule& bearing = judgement.rules[1];
    EXPECT_EQ(bearing.unit, "g");
    EXPECT_EQ(bearing.high_alert, 0.5);  // demo choice, no source
    EXPECT_EQ(bearing.high_danger, 1.0);
    EXPECT_EQ(judgement.sensor.full_scale, 50.0);  // 5 V / 0.1 V/g
    EXPECT_TRUE(judgement.sensor.Validate().ok());
  }
}

TEST(SiteJudgement, ExampleSiteMapsWithoutErrors) {
  config::LoadedSite loaded =
      config::LoadSiteFile(testing::TestDataDir() / "config" / "larkfield_site.yaml");
  ASSERT_TRUE(loaded.ok()) << Problems(loaded);
  auto judgements = JudgementsFromSite(loaded.site);
  ASSERT_TRUE(judgements.ok()) << judgements.message();
  ASSERT_EQ(judgements->size(), 4u);
  // P101-NDE-H: group 2 rigid with baseline 0.9 -> alert 1.6 mm/s (the standard's example).
  ASSERT_EQ((*judgements)[1].rules.size(), 1u);
  EXPECT_NEAR((*judgements)[1].rules[0].high_alert, 1.6, 1e-12);
}

}  // namespace
}  // namespace spinward::daemon
