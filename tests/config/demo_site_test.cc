// The built-in demo site loads through the same loader as a user's file, with the station the
// daemon's demo describes.
#include "spinward/config/demo_site.h"

#include <gtest/gtest.h>

#include "spinward/config/point_options.h"
#include "spinward/config/site_loader.h"

namespace spinward::config {
namespace {

std::string Problems(const LoadedSite& loaded) {
  std::string text;
  for (const auto& problem : loaded.problems) text += problem.ToString() + "\n";
  return text;
}

TEST(DemoSite, LoadsWithoutProblems) {
  LoadedSite loaded = ParseSiteText(DemoSiteYaml(), "demo");
  ASSERT_TRUE(loaded.ok()) << Problems(loaded);
  const SiteConfig& site = loaded.site;
  EXPECT_EQ(site.site.name, "Larkfield booster pump station");
  ASSERT_EQ(site.machines.size(), 3u);
  EXPECT_EQ(site.machines[0].id, "P-101");
  EXPECT_EQ(site.machines[1].id, "P-102");
  EXPECT_EQ(site.machines[2].id, "F-201");
  EXPECT_EQ(site.machines[0].speed_rpm, 1480.0);
  EXPECT_EQ(site.machines[2].speed_rpm, 980.0);
  EXPECT_EQ(site.machines[2].support, MachineSupport::kFlexible);
  EXPECT_FALSE(site.drop_directory.has_value());
  for (const auto& point : site.points) {
    EXPECT_EQ(point.sample_rate_hz, 25600.0) << point.id;
    // Every band fits below Nyquist, 12800 Hz.
    for (const auto& band : point.bands) EXPECT_LE(band.hi_hz, 12800.0) << point.id;
  }
}

TEST(DemoSite, EveryPointHasItsLimitsAndSensorChecks) {
  LoadedSite loaded = ParseSiteText(DemoSiteYaml(), "demo");
  ASSERT_TRUE(loaded.ok()) << Problems(loaded);
  ASSERT_EQ(loaded.site.points.size(), 8u);
  for (const auto& point : loaded.site.points) {
    SCOPED_TRACE(point.id);
    ASSERT_EQ(point.alarms.size(), 2u);
    const AlarmLimitConfig& velocity = point.alarms[0];
    EXPECT_EQ(velocity.measure, "velocity");
    EXPECT_EQ(velocity.preset, AlarmPreset::kIso10816_3);  // limits from the machine's class
    EXPECT_EQ(velocity.on_delay.n, 2);
    EXPECT_EQ(velocity.on_delay.m, 3);
    EXPECT_EQ(velocity.off_delay, 2);
    EXPECT_TRUE(velocity.latching);
    const AlarmLimitConfig& bearing = point.alarms[1];
    EXPECT_EQ(bearing.measure, "bearing");
    // Demo choice, no source.
    EXPECT_EQ(bearing.alert, 0.5);
    EXPECT_EQ(bearing.danger, 1.0);
    EXPECT_EQ(bearing.on_delay.n, 2);
    EXPECT_EQ(bearing.on_delay.m, 3);
    EXPECT_FALSE(bearing.latching);

    // The preset needs a velocity band in mm/s, the bearing limits a band in g.
    ASSERT_GE(point.bands.size(), 2u);
    EXPECT_EQ(point.bands[0].unit, estimators::Unit::kMillimetresPerSecond);
    EXPECT_EQ(point.bands[1].unit, estimators::Unit::kG);

    // Full scale of a 100 mV/g sensor on a +-5 V input: 5 V / 0.1 V/g = 50 g (arithmetic).
    ASSERT_TRUE(point.sensitivity.has_value());
    ASSERT_TRUE(point.sensor_checks.full_scale.has_value());
    EXPECT_DOUBLE_EQ(*point.sensor_checks.full_scale, 5.0 / point.sensitivity->volts_per_unit);
    EXPECT_EQ(point.sensor_checks.noise_floor_rms, 0.0005);  // demo choice
  }
  // The ISO class the preset reads: pumps group 2 rigid, the fan group 2 flexible.
  EXPECT_EQ(loaded.site.FindMachine("P-101")->iso_group, 2);
  EXPECT_EQ(loaded.site.FindMachine("P-101")->support, MachineSupport::kRigid);
  EXPECT_EQ(loaded.site.FindMachine("F-201")->support, MachineSupport::kFlexible);
}

TEST(DemoSite, CallerChoosesPortsIntervalAndDropDirectory) {
  DemoSiteOptions options;
  options.tcp_port = 7411;
  options.udp_port = 7412;
  options.interval_s = 0.5;
  options.drop_directory = "/tmp/larkfield \"drop\"";
  options.storage_path = "/tmp/larkfield.sqlite";
  LoadedSite loaded = ParseSiteText(DemoSiteYaml(options), "demo");
  ASSERT_TRUE(loaded.ok()) << Problems(loaded);
  ASSERT_EQ(loaded.site.listeners.size(), 2u);
  EXPECT_EQ(loaded.site.listeners[0].type, ListenerType::kTcp);
  EXPECT_EQ(loaded.site.listeners[0].port, 7411);
  EXPECT_EQ(loaded.site.listeners[1].type, ListenerType::kUdp);
  EXPECT_EQ(loaded.site.listeners[1].port, 7412);
  ASSERT_TRUE(loaded.site.drop_directory.has_value());
  EXPECT_EQ(loaded.site.drop_directory->path, "/tmp/larkfield \"drop\"");  // quotes survive
  EXPECT_EQ(loaded.site.storage.path, "/tmp/larkfield.sqlite");
  ASSERT_FALSE(loaded.site.points.empty());
  estimators::WelchOptions welch = PointWelchOptions(loaded.site, loaded.site.points[0]);
  // 0.5 s x 25600 Hz = 12800 samples = 6.25 hops of 2048 -> 6 segments (arithmetic).
  EXPECT_EQ(welch.segments_per_average, 6u);
  EXPECT_EQ(welch.overlap, 2048u);
}

}  // namespace
}  // namespace spinward::config
