// The example site (tests/data/config/larkfield_site.yaml) loads with the values written in it, the
// defaults fill what it leaves out, and the per-point estimator options follow from the profile.
#include "spinward/config/site_loader.h"

#include <gtest/gtest.h>

#include <cmath>

#include "spinward/config/point_options.h"
#include "support/test_paths.h"

namespace spinward::config {
namespace {

using estimators::Unit;

LoadedSite LoadExample() {
  return LoadSiteFile(testing::TestDataDir() / "config" / "larkfield_site.yaml");
}

std::string AllProblems(const LoadedSite& loaded) {
  std::string text;
  for (const auto& problem : loaded.problems) text += problem.ToString() + "\n";
  return text;
}

TEST(SiteLoader, ExampleLoadsWithoutProblems) {
  LoadedSite loaded = LoadExample();
  EXPECT_TRUE(loaded.ok()) << AllProblems(loaded);
  EXPECT_EQ(loaded.site.site.name, "Larkfield booster pump station");
}

TEST(SiteLoader, ExampleMachines) {
  const SiteConfig site = LoadExample().site;
  ASSERT_EQ(site.machines.size(), 3u);
  EXPECT_EQ(site.machines[0].id, "P-101");
  EXPECT_EQ(site.machines[0].kind, MachineKind::kPump);
  EXPECT_EQ(site.machines[0].speed_rpm, 1480.0);
  EXPECT_EQ(site.machines[0].iso_group, 2);
  EXPECT_EQ(site.machines[0].support, MachineSupport::kRigid);
  // P-102 leaves iso_group and support out: the defaults written in MachineConfig apply.
  EXPECT_EQ(site.machines[1].iso_group, MachineConfig{}.iso_group);
  EXPECT_EQ(site.machines[1].support, MachineConfig{}.support);
  EXPECT_EQ(site.machines[2].kind, MachineKind::kFan);
  EXPECT_EQ(site.machines[2].speed_rpm, 980.0);
  EXPECT_EQ(site.machines[2].support, MachineSupport::kFlexible);
}

TEST(SiteLoader, ExampleProfiles) {
  const SiteConfig site = LoadExample().site;
  ASSERT_EQ(site.profiles.size(), 2u);
  const ProfileConfig& standard = site.profiles[0];
  EXPECT_EQ(standard.segment_length, 4096u);
  EXPECT_EQ(standard.overlap, 2048u);  // 50 % of 4096 samples (arithmetic)
  EXPECT_EQ(standard.fft_length, 0u);
  EXPECT_EQ(standard.window.kind, estimators::WindowKind::kHann);
  EXPECT_EQ(standard.detrend, estimators::Detrend::kMean);  // default, SciPy's 'constant'
  EXPECT_EQ(standard.averaging, estimators::Averaging::kMean);
  EXPECT_EQ(standard.interval_s, 2.0);

  const ProfileConfig& fan = site.profiles[1];
  EXPECT_EQ(fan.segment_length, 8192u);
  EXPECT_EQ(fan.overlap, 6144u);
  EXPECT_EQ(fan.fft_length, 16384u);
  EXPECT_EQ(fan.window.kind, estimators::WindowKind::kFlatTop);
  EXPECT_EQ(fan.detrend, estimators::Detrend::kLinear);
  EXPECT_EQ(fan.averaging, estimators::Averaging::kExponential);
  EXPECT_EQ(fan.time_constant_s, 30.0);
}

TEST(SiteLoader, ExamplePointsAndSensorUnits) {
  const SiteConfig site = LoadExample().site;
  ASSERT_EQ(site.points.size(), 4u);
  const PointConfig& de = site.points[0];
  EXPECT_EQ(de.id, "P101-DE-H");
  EXPECT_EQ(de.machine, "P-101");
  EXPECT_EQ(de.location, "drive-end bearing");
  EXPECT_EQ(de.direction, Direction::kHorizontal);
  EXPECT_EQ(de.sensor, "LK-P101-DE-H");
  ASSERT_TRUE(de.sensitivity.has_value());
  EXPECT_DOUBLE_EQ(de.sensitivity->volts_per_unit, 0.1);  // 100 mV/g = 0.1 V per g
  EXPECT_EQ(de.sensitivity->unit, Unit::kG);
  EXPECT_EQ(de.unit, Unit::kG);  // taken from the sensitivity
  EXPECT_EQ(de.sample_rate_hz, 25600.0);
  EXPECT_EQ(de.profile, "standard");

  const PointConfig& nde = site.points[1];
  EXPECT_FALSE(nde.sensitivity.has_value());  // frames carry engineering units
  EXPECT_EQ(nde.unit, Unit::kMetresPerSecondSquared);
  EXPECT_EQ(nde.direction, PointConfig{}.direction);

  const PointConfig& axial = site.points[2];
  EXPECT_EQ(axial.direction, Direction::kAxial);
  ASSERT_TRUE(axial.sensitivity.has_value());
  EXPECT_DOUBLE_EQ(axial.sensitivity->volts_per_unit, 0.0102);
  EXPECT_EQ(axial.unit, Unit::kMetresPerSecondSquared);
}

TEST(SiteLoader, ExampleBandsTakeUnitsFromQuantity) {
  const SiteConfig site = LoadExample().site;
  ASSERT_EQ(site.points.size(), 4u);
  ASSERT_EQ(site.points[0].bands.size(), 2u);
  EXPECT_EQ(site.points[0].bands[0].name, "velocity");
  EXPECT_EQ(site.points[0].bands[0].lo_hz, 10.0);
  EXPECT_EQ(site.points[0].bands[0].hi_hz, 1000.0);
  EXPECT_EQ(site.points[0].bands[0].unit, Unit::kMillimetresPerSecond);
  EXPECT_EQ(site.points[0].bands[1].unit, Unit::kG);
  // No quantity and no units: a velocity band in mm/s (the ISO 10816 severity measure).
  ASSERT_EQ(site.points[1].bands.size(), 1u);
  EXPECT_EQ(site.points[1].bands[0].unit, Unit::kMillimetresPerSecond);
  // Displacement without units: micrometres.
  EXPECT_EQ(site.points[2].bands[0].unit, Unit::kMicrometres);
  EXPECT_EQ(site.points[3].bands[0].unit, Unit::kInchesPerSecond);
}

TEST(SiteLoader, ExampleListenersDropDirectoryStorageLogging) {
  const SiteConfig site = LoadExample().site;
  ASSERT_EQ(site.listeners.size(), 2u);
  const ListenerConfig& tcp = site.listeners[0];
  EXPECT_EQ(tcp.type, ListenerType::kTcp);
  EXPECT_EQ(tcp.address, "127.0.0.1");  // default
  EXPECT_EQ(tcp.port, 7301);
  EXPECT_EQ(tcp.max_connections, 4u);
  EXPECT_EQ(tcp.idle_timeout_s, 30.0);
  EXPECT_EQ(tcp.allowed_peers, (std::vector<std::string>{"127.0.0.1", "::1"}));
  const ListenerConfig& udp = site.listeners[1];
  EXPECT_EQ(udp.type, ListenerType::kUdp);
  EXPECT_EQ(udp.address, "::1");
  EXPECT_EQ(udp.port, 7302);
  // 65507: the largest UDP payload over IPv4 (65535 - 8 UDP header - 20 IP header; RFC 768/791).
  EXPECT_EQ(udp.max_frame_bytes, 65507u);

  ASSERT_TRUE(site.drop_directory.has_value());
  EXPECT_EQ(site.drop_directory->path, "/var/spool/spinward/larkfield");
  EXPECT_EQ(site.drop_directory->poll_interval_s, 5.0);
  ASSERT_EQ(site.drop_directory->files.size(), 3u);
  EXPECT_EQ(site.drop_directory->files[0].format, FileFormat::kWav);  // from ".wav"
  EXPECT_EQ(site.drop_directory->files[1].format, FileFormat::kCsv);  // from ".csv"
  EXPECT_EQ(site.drop_directory->files[1].sample_rate_hz, 25600.0);
  EXPECT_EQ(site.drop_directory->files[2].format, FileFormat::kRawInt16);  // given

  EXPECT_EQ(site.storage.path, "/var/lib/spinward/larkfield.sqlite");
  EXPECT_EQ(site.logging.level, LogLevel::kDebug);
  EXPECT_EQ(site.logging.file, "/var/log/spinward/larkfield.log");
}

TEST(SiteLoader, ExampleAlarms) {
  const SiteConfig site = LoadExample().site;
  ASSERT_EQ(site.points.size(), 4u);
  const auto& alarms = site.points[0].alarms;
  ASSERT_EQ(alarms.size(), 3u);
  const AlarmLimitConfig& velocity = alarms[0];
  EXPECT_EQ(velocity.measure, "velocity");
  EXPECT_EQ(velocity.preset, AlarmPreset::kIso10816_3);
  EXPECT_FALSE(velocity.alert.has_value());  // the preset gives them (daemon side)
  EXPECT_FALSE(velocity.danger.has_value());
  EXPECT_EQ(velocity.on_delay.n, 2);
  EXPECT_EQ(velocity.on_delay.m, 3);
  EXPECT_EQ(velocity.off_delay, 2);
  EXPECT_TRUE(velocity.latching);
  // Unset keys take the defaults written in AlarmLimitConfig.
  EXPECT_EQ(velocity.deadband.kind, DeadbandKind::kPercent);
  EXPECT_EQ(velocity.deadband.value, 5.0);
  EXPECT_FALSE(velocity.stale_after_s.has_value());
  EXPECT_FALSE(velocity.baseline.has_value());

  const AlarmLimitConfig& bearing = alarms[1];
  EXPECT_EQ(bearing.preset, AlarmPreset::kNone);
  EXPECT_EQ(bearing.alert, 0.5);
  EXPECT_EQ(bearing.danger, 1.0);
  EXPECT_EQ(bearing.low_alert, 0.002);
  EXPECT_FALSE(bearing.low_danger.has_value());
  EXPECT_EQ(bearing.deadband.kind, DeadbandKind::kAbsolute);  // a plain number: the band's unit
  EXPECT_EQ(bearing.deadband.value, 0.02);
  EXPECT_EQ(bearing.on_delay.n, 3);  // a plain N means N of N
  EXPECT_EQ(bearing.on_delay.m, 3);
  EXPECT_EQ(bearing.off_delay, 1);
  EXPECT_FALSE(bearing.latching);
  EXPECT_EQ(bearing.stale_after_s, 600.0);

  EXPECT_EQ(alarms[2].measure, "overall_crest_factor");
  EXPECT_EQ(alarms[2].deadband.kind, DeadbandKind::kPercent);
  EXPECT_EQ(alarms[2].deadband.value, 10.0);

  ASSERT_EQ(site.points[1].alarms.size(), 1u);
  EXPECT_EQ(site.points[1].alarms[0].baseline, 0.9);
  EXPECT_TRUE(site.points[2].alarms.empty());
  ASSERT_EQ(site.points[3].alarms.size(), 1u);
  EXPECT_EQ(site.points[3].alarms[0].low_danger, 0.002);
}

TEST(SiteLoader, ExampleSensorChecksAndDefaults) {
  const SiteConfig site = LoadExample().site;
  ASSERT_EQ(site.points.size(), 4u);
  const SensorChecksConfig& checks = site.points[0].sensor_checks;
  EXPECT_EQ(checks.full_scale, 50.0);
  EXPECT_EQ(checks.clip_count, 5u);
  EXPECT_EQ(checks.noise_floor_rms, 0.0005);
  EXPECT_EQ(checks.identical_run, 200u);
  ASSERT_TRUE(checks.mean_window.has_value());
  EXPECT_EQ(checks.mean_window->low, -0.5);
  EXPECT_EQ(checks.mean_window->high, 0.5);
  EXPECT_EQ(checks.max_sequence_gaps, 1u);
  // A point without sensor_checks: clipping and bias checks off, counts at their defaults.
  const SensorChecksConfig& none = site.points[1].sensor_checks;
  EXPECT_FALSE(none.full_scale.has_value());
  EXPECT_FALSE(none.noise_floor_rms.has_value());
  EXPECT_FALSE(none.mean_window.has_value());
  EXPECT_EQ(none.clip_count, 3u);
  EXPECT_EQ(none.identical_run, 100u);
  EXPECT_EQ(none.max_sequence_gaps, 0u);
}

TEST(SiteLoader, ExampleStorageRetentionAndDefaults) {
  const SiteConfig site = LoadExample().site;
  EXPECT_EQ(site.storage.retention.raw_days, 30);
  EXPECT_EQ(site.storage.retention.hourly_days, 730);
  EXPECT_EQ(site.storage.retention.daily_days, 0);  // not given: kept forever
  EXPECT_EQ(site.storage.retention.spectrum_days, 14);
  EXPECT_EQ(site.storage.spectrum_every_s, 900.0);
  EXPECT_EQ(site.storage.durability, Durability::kNormal);

  // A site without a storage section gets the defaults the task set: 90 days raw, 1095 hourly,
  // daily forever, spectra 90 days, one spectrum an hour, durability full.
  LoadedSite bare = ParseSiteText(
      "site: {name: x}\nmachines: [{id: M, speed_rpm: 1480}]\nprofiles: [{id: p}]\n"
      "points: [{id: A, machine: M, sensor: S, sample_rate_hz: 25600, profile: p}]\n"
      "listeners: [{port: 0}]\n",
      "bare.yaml");
  ASSERT_TRUE(bare.ok()) << AllProblems(bare);
  EXPECT_EQ(bare.site.storage.path, "spinward.sqlite");
  EXPECT_EQ(bare.site.storage.retention.raw_days, 90);
  EXPECT_EQ(bare.site.storage.retention.hourly_days, 1095);
  EXPECT_EQ(bare.site.storage.retention.daily_days, 0);
  EXPECT_EQ(bare.site.storage.retention.spectrum_days, 90);
  EXPECT_EQ(bare.site.storage.spectrum_every_s, 3600.0);
  EXPECT_EQ(bare.site.storage.durability, Durability::kFull);
}

// One point with a velocity band in mm/s, a velocity band in in/s and a bearing band in g; each
// case adds its own keys to the point (`point_extra`) or the file (`file_extra`).
std::string AlarmSite(const std::string& point_extra, const std::string& file_extra = "") {
  return "site: {name: x}\n"
         "machines: [{id: M, speed_rpm: 1480}]\n"
         "profiles: [{id: p}]\n"
         "points:\n"
         "  - id: A\n"
         "    machine: M\n"
         "    sensor: S\n"
         "    sample_rate_hz: 25600\n"
         "    profile: p\n"
         "    bands:\n"
         "      - {name: velocity, lo_hz: 10, hi_hz: 1000, units: mm/s}\n"
         "      - {name: velocity_ips, lo_hz: 10, hi_hz: 1000, units: in/s}\n"
         "      - {name: bearing, lo_hz: 1000, hi_hz: 10000, quantity: acceleration, units: g}\n" +
         point_extra + "listeners: [{port: 0}]\n" + file_extra;
}

struct ProblemCase {
  const char* what;
  std::string text;
  const char* key;
  const char* problem_part;
};

TEST(SiteLoader, AlarmSensorAndStorageMistakesAreReported) {
  const std::string a = "    alarms:\n      - ";
  const ProblemCase cases[] = {
      {"no danger, no preset", AlarmSite(a + "{measure: bearing, alert: 0.5}\n"),
       "points[0].alarms[0].danger", "give alert and danger, or preset"},
      {"alert equal to danger", AlarmSite(a + "{measure: bearing, alert: 1, danger: 1}\n"),
       "points[0].alarms[0].danger", "must be above alert"},
      {"baseline without preset",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, baseline: 0.1}\n"),
       "points[0].alarms[0].baseline", "applies only with preset"},
      {"negative baseline",
       AlarmSite(a + "{measure: velocity, preset: iso10816-3, baseline: -1}\n"),
       "points[0].alarms[0].baseline", "must be 0 mm/s or more, got -1"},
      {"preset and danger", AlarmSite(a + "{measure: velocity, preset: iso10816-3, danger: 9}\n"),
       "points[0].alarms[0].danger", "is set by preset"},
      {"preset on in/s", AlarmSite(a + "{measure: velocity_ips, preset: iso10816-3}\n"),
       "points[0].alarms[0].preset", "is in in/s; give the band units: mm/s"},
      {"preset on an indicator", AlarmSite(a + "{measure: overall_rms, preset: iso10816-3}\n"),
       "points[0].alarms[0].preset", "'overall_rms' is an overall indicator in g"},
      {"unknown preset", AlarmSite(a + "{measure: velocity, preset: iso-10816}\n"),
       "points[0].alarms[0].preset", "unknown alarm preset 'iso-10816' (accepted: iso10816-3)"},
      {"low limits reversed",
       AlarmSite(a +
                 "{measure: bearing, alert: 0.5, danger: 1, low_alert: 0.01, low_danger: 0.02}\n"),
       "points[0].alarms[0].low_danger", "low_danger 0.02 must be below low_alert 0.01"},
      {"low limit above alert",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, low_danger: 0.6}\n"),
       "points[0].alarms[0].low_danger", "low_danger 0.6 must be below alert 0.5"},
      // Reset levels: low 0.4 + 0.1 = 0.5, high 0.5 - 0.1 = 0.4: they cross (arithmetic).
      {"deadband joins the low and high resets",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, low_alert: 0.4, deadband: 0.1}\n"),
       "points[0].alarms[0].deadband", "reach that of alert"},
      {"percent deadband too wide",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, deadband: 50%}\n"),
       "points[0].alarms[0].deadband", "must be below 50%"},
      {"negative deadband",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, deadband: -0.1}\n"),
       "points[0].alarms[0].deadband", "must not be negative"},
      {"on_delay 0", AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, on_delay: 0}\n"),
       "points[0].alarms[0].on_delay", "N must be at least 1"},
      {"on_delay window too long",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, on_delay: 2 of 65}\n"),
       "points[0].alarms[0].on_delay", "M must be at most 64"},
      {"on_delay words",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, on_delay: twice}\n"),
       "points[0].alarms[0].on_delay", "is not 'N of M'"},
      {"off_delay 0", AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, off_delay: 0}\n"),
       "points[0].alarms[0].off_delay", "must be at least 1 interval"},
      {"latching yes", AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, latching: yes}\n"),
       "points[0].alarms[0].latching", "expected true or false, got 'yes'"},
      {"stale_after_s 0",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, stale_after_s: 0}\n"),
       "points[0].alarms[0].stale_after_s", "must be above 0 seconds"},
      {"two limit sets on one measure",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1}\n" +
                 "      - {measure: bearing, alert: 0.6, danger: 1}\n"),
       "points[0].alarms[1].measure", "duplicate alarm on measure 'bearing'"},
      {"unknown alarm key",
       AlarmSite(a + "{measure: bearing, alert: 0.5, danger: 1, on_dealy: 2}\n"),
       "points[0].alarms[0].on_dealy", "did you mean 'on_delay'?"},
      {"band named like an indicator",
       AlarmSite("      - {name: overall_rms, lo_hz: 10, hi_hz: 100}\n"), "points[0].bands[3].name",
       "is the name of an overall indicator"},
      {"full_scale 0", AlarmSite("    sensor_checks: {full_scale: 0}\n"),
       "points[0].sensor_checks.full_scale", "must be above 0 g, got 0"},
      {"clip_count without full_scale", AlarmSite("    sensor_checks: {clip_count: 4}\n"),
       "points[0].sensor_checks.clip_count", "has no effect without full_scale"},
      {"clip_count 0", AlarmSite("    sensor_checks: {full_scale: 50, clip_count: 0}\n"),
       "points[0].sensor_checks.clip_count", "must be at least 1"},
      {"noise floor above full scale",
       AlarmSite("    sensor_checks: {full_scale: 5, noise_floor_rms: 6}\n"),
       "points[0].sensor_checks.noise_floor_rms", "must be below full_scale 5"},
      {"identical_run 1", AlarmSite("    sensor_checks: {identical_run: 1}\n"),
       "points[0].sensor_checks.identical_run", "must be at least 2 samples, got 1"},
      {"mean_window of one number", AlarmSite("    sensor_checks: {mean_window: [0.5]}\n"),
       "points[0].sensor_checks.mean_window", "expected a list of two numbers [low, high], got 1"},
      {"mean_window with text", AlarmSite("    sensor_checks: {mean_window: [low, 0.5]}\n"),
       "points[0].sensor_checks.mean_window[0]", "expected a number, got 'low'"},
      {"negative gaps", AlarmSite("    sensor_checks: {max_sequence_gaps: -1}\n"),
       "points[0].sensor_checks.max_sequence_gaps", "must not be negative"},
      {"retention past the int64 clock",
       AlarmSite("", "storage: {retention: {daily_days: 200000}}\n"),
       "storage.retention.daily_days", "must be at most 100000 days"},
      {"fractional retention", AlarmSite("", "storage: {retention: {raw_days: 1.5}}\n"),
       "storage.retention.raw_days", "expected a whole number, got '1.5'"},
      {"negative spectrum spacing", AlarmSite("", "storage: {spectrum_every_s: -60}\n"),
       "storage.spectrum_every_s", "must be 0 (every interval) or more seconds"},
      {"unknown durability", AlarmSite("", "storage: {durability: fast}\n"), "storage.durability",
       "unknown durability 'fast' (accepted: full, normal)"},
  };
  for (const auto& c : cases) {
    SCOPED_TRACE(c.what);
    LoadedSite loaded = ParseSiteText(c.text, "inline.yaml");
    ASSERT_EQ(loaded.problems.size(), 1u) << AllProblems(loaded);
    EXPECT_EQ(loaded.problems[0].key, c.key) << AllProblems(loaded);
    EXPECT_NE(loaded.problems[0].problem.find(c.problem_part), std::string::npos)
        << AllProblems(loaded);
  }
}

TEST(SiteLoader, GoodAlarmVariantsLoad) {
  // Low limits only on one side, an absolute deadband, a preset with a baseline, spectra kept
  // with every interval: all accepted as written.
  const std::string text = AlarmSite(
      "    alarms:\n"
      "      - {measure: velocity, preset: iso10816-3, baseline: 0.9, low_alert: 0.05}\n"
      "      - {measure: overall_kurtosis, alert: 4, danger: 6, deadband: 0.2, on_delay: 4 of 8}\n"
      "      - {measure: bearing, alert: 0.5, danger: 1, latching: false, stale_after_s: 0.5}\n"
      "    sensor_checks: {noise_floor_rms: 0}\n",
      "storage: {spectrum_every_s: 0, durability: full, retention: {raw_days: 0}}\n");
  LoadedSite loaded = ParseSiteText(text, "inline.yaml");
  ASSERT_TRUE(loaded.ok()) << AllProblems(loaded);
  const auto& alarms = loaded.site.points[0].alarms;
  ASSERT_EQ(alarms.size(), 3u);
  EXPECT_EQ(alarms[0].low_alert, 0.05);
  EXPECT_EQ(alarms[1].on_delay.n, 4);
  EXPECT_EQ(alarms[1].on_delay.m, 8);
  EXPECT_EQ(alarms[2].stale_after_s, 0.5);
  EXPECT_EQ(loaded.site.points[0].sensor_checks.noise_floor_rms, 0.0);
  EXPECT_EQ(loaded.site.storage.spectrum_every_s, 0.0);
  EXPECT_EQ(loaded.site.storage.retention.raw_days, 0);
}

TEST(AlarmTexts, OnDelayParsesNOfMAndPlainN) {
  auto two_of_three = ParseOnDelay("2 of 3");
  ASSERT_TRUE(two_of_three.ok()) << two_of_three.message();
  EXPECT_EQ(two_of_three->n, 2);
  EXPECT_EQ(two_of_three->m, 3);
  auto plain = ParseOnDelay("4");
  ASSERT_TRUE(plain.ok()) << plain.message();
  EXPECT_EQ(plain->n, 4);
  EXPECT_EQ(plain->m, 4);
  auto widest = ParseOnDelay("1 of 64");  // the alarm engine's longest window
  ASSERT_TRUE(widest.ok()) << widest.message();
  EXPECT_EQ(widest->m, 64);
  for (const char* bad :
       {"3 of 2", "0", "0 of 3", "-1 of 3", "2 of", "of 3", "2/3", "", "2.5", "1 of 65"}) {
    EXPECT_FALSE(ParseOnDelay(bad).ok()) << bad;
  }
}

TEST(AlarmTexts, DeadbandParsesPercentOrAbsolute) {
  auto percent = ParseDeadband("5%");
  ASSERT_TRUE(percent.ok()) << percent.message();
  EXPECT_EQ(percent->kind, DeadbandKind::kPercent);
  EXPECT_EQ(percent->value, 5.0);
  auto spaced = ParseDeadband("2.5 %");
  ASSERT_TRUE(spaced.ok()) << spaced.message();
  EXPECT_EQ(spaced->value, 2.5);
  auto absolute = ParseDeadband("0.3");
  ASSERT_TRUE(absolute.ok()) << absolute.message();
  EXPECT_EQ(absolute->kind, DeadbandKind::kAbsolute);
  EXPECT_EQ(absolute->value, 0.3);
  EXPECT_TRUE(ParseDeadband("0").ok());  // no hysteresis is allowed
  for (const char* bad : {"50%", "-1%", "-0.1", "%", "five", "5 percent", "", "nan", "inf%"}) {
    EXPECT_FALSE(ParseDeadband(bad).ok()) << bad;
  }
}

TEST(PointOptions, WelchOptionsFollowProfileAndRate) {
  const SiteConfig site = LoadExample().site;
  ASSERT_EQ(site.points.size(), 4u);
  estimators::WelchOptions de = PointWelchOptions(site, site.points[0]);
  EXPECT_EQ(de.sample_rate_hz, 25600.0);
  EXPECT_EQ(de.segment_length, 4096u);
  EXPECT_EQ(de.overlap, 2048u);
  // 2 s at 25600 Hz = 51200 samples = 25 hops of 2048 (arithmetic).
  EXPECT_EQ(de.segments_per_average, 25u);
  EXPECT_TRUE(de.Validate().ok()) << de.Validate().message();

  estimators::WelchOptions fan = PointWelchOptions(site, site.points[3]);
  EXPECT_EQ(fan.sample_rate_hz, 12800.0);
  EXPECT_EQ(fan.fft_length, 16384u);
  EXPECT_EQ(fan.averaging, estimators::Averaging::kExponential);
  EXPECT_EQ(fan.exponential_time_constant_s, 30.0);
  // 10 s at 12800 Hz = 128000 samples; hop 8192 - 6144 = 2048; 128000 / 2048 = 62.5 -> 63
  // (round half away from zero, as std::round does).
  EXPECT_EQ(fan.segments_per_average, 63u);
}

TEST(PointOptions, SegmentsPerAverageRoundsAndReportsTooShort) {
  // 1 s at 25600 Hz with hop 2048: 12.5 hops -> 13 (arithmetic).
  EXPECT_EQ(SegmentsPerAverage(1.0, 25600.0, 2048), 13u);
  // 0.1 s = 2560 samples = 1.25 hops -> 1.
  EXPECT_EQ(SegmentsPerAverage(0.1, 25600.0, 2048), 1u);
  // 0.03 s = 768 samples = 0.375 hop: no average completes; reported as 0, never rounded up.
  EXPECT_EQ(SegmentsPerAverage(0.03, 25600.0, 2048), 0u);
  EXPECT_EQ(SegmentsPerAverage(1.0, 25600.0, 0), 0u);
}

TEST(SiteLoader, ProblemsPrintAsFileLineColumnKeyProblem) {
  ConfigProblem problem{"site.yaml", 12, 5, "points[2].bands[0].hi_hz", "too high"};
  EXPECT_EQ(problem.ToString(), "site.yaml:12:5: points[2].bands[0].hi_hz: too high");
  ConfigProblem syntax{"site.yaml", 3, 1, "", "YAML syntax error: x"};
  EXPECT_EQ(syntax.ToString(), "site.yaml:3:1: YAML syntax error: x");
  ConfigProblem file{"site.yaml", 0, 0, "", "cannot read the file: No such file or directory"};
  EXPECT_EQ(file.ToString(), "site.yaml: cannot read the file: No such file or directory");
}

TEST(SiteLoader, MissingFileIsOneProblem) {
  LoadedSite loaded = LoadSiteFile(testing::TestDataDir() / "config" / "no_such_site.yaml");
  ASSERT_EQ(loaded.problems.size(), 1u);
  EXPECT_EQ(loaded.problems[0].line, 0);
  EXPECT_NE(loaded.problems[0].problem.find("cannot read"), std::string::npos);
}

TEST(SiteLoader, ReportsEveryProblemAtOnce) {
  // Three independent mistakes in one file: all three come back, in file order.
  const char* text = R"(site: {name: x}
machines:
  - {id: M1, speed_rpm: -5}
profiles:
  - {id: p, segmnt: 1024}
points:
  - {id: A, machine: M1, sensor: S, sample_rate_hz: 8192, profile: p, direction: sideways}
listeners:
  - {port: 1}
)";
  LoadedSite loaded = ParseSiteText(text, "inline.yaml");
  ASSERT_EQ(loaded.problems.size(), 3u) << AllProblems(loaded);
  EXPECT_EQ(loaded.problems[0].key, "machines[0].speed_rpm");
  EXPECT_EQ(loaded.problems[1].key, "profiles[0].segmnt");
  EXPECT_EQ(loaded.problems[2].key, "points[0].direction");
  EXPECT_EQ(loaded.problems[0].file, "inline.yaml");
}

TEST(SiteLoader, DeepNestingIsASyntaxErrorNotACrash) {
  // yaml-cpp guards its recursive parser with a depth limit (500 levels); 5000 is far past it.
  LoadedSite loaded = ParseSiteText(std::string(5000, '['), "deep.yaml");
  ASSERT_EQ(loaded.problems.size(), 1u) << AllProblems(loaded);
  EXPECT_NE(loaded.problems[0].problem.find("nesting too deep"), std::string::npos)
      << AllProblems(loaded);
}

}  // namespace
}  // namespace spinward::config
