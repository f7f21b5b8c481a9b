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
