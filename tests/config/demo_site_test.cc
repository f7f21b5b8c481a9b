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
