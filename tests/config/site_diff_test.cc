// Reload on SIGHUP: which points keep running, which are rebuilt, which start and which stop.
#include "spinward/config/site_diff.h"

#include <gtest/gtest.h>

#include <string>

#include "spinward/config/site_loader.h"

namespace spinward::config {
namespace {

// A small site with a text hole for each experiment.
std::string Site(const std::string& profile_extra, const std::string& machine_rpm,
                 const std::string& points, const std::string& listener_port = "7301") {
  return "site: {name: Larkfield}\n"
         "machines:\n"
         "  - {id: P-101, speed_rpm: " +
         machine_rpm +
         "}\n"
         "  - {id: P-102, speed_rpm: 1480}\n"
         "profiles:\n"
         "  - {id: standard, segment: 4096" +
         profile_extra +
         "}\n"
         "  - {id: fine, segment: 16384}\n"
         "points:\n" +
         points + "listeners: [{port: " + listener_port + "}]\n";
}

const std::string kDe =
    "  - {id: DE, machine: P-101, sensor: S-DE, sample_rate_hz: 25600, profile: standard}\n";
const std::string kNde =
    "  - {id: NDE, machine: P-101, sensor: S-NDE, sample_rate_hz: 25600, profile: standard}\n";
const std::string kOther =
    "  - {id: P2, machine: P-102, sensor: S-P2, sample_rate_hz: 25600, profile: fine}\n";

SiteConfig Load(const std::string& text) {
  LoadedSite loaded = ParseSiteText(text, "diff.yaml");
  EXPECT_TRUE(loaded.ok()) << (loaded.problems.empty() ? "" : loaded.problems[0].ToString());
  return loaded.site;
}

using Ids = std::vector<std::string>;

TEST(SiteDiff, IdenticalSitesChangeNothing) {
  SiteConfig site = Load(Site("", "1480", kDe + kNde + kOther));
  SiteDiff diff = DiffSites(site, site);
  EXPECT_TRUE(diff.empty());
  EXPECT_EQ(diff.unchanged, (Ids{"DE", "NDE", "P2"}));
}

TEST(SiteDiff, AddedRemovedAndEditedPoints) {
  SiteConfig before = Load(Site("", "1480", kDe + kNde + kOther));
  const std::string de_faster =
      "  - {id: DE, machine: P-101, sensor: S-DE, sample_rate_hz: 51200, profile: standard}\n";
  const std::string added =
      "  - {id: DE-A, machine: P-101, sensor: S-DE-A, sample_rate_hz: 25600, profile: standard}\n";
  SiteConfig after = Load(Site("", "1480", de_faster + kOther + added));
  SiteDiff diff = DiffSites(before, after);
  EXPECT_EQ(diff.changed, (Ids{"DE"}));
  EXPECT_EQ(diff.unchanged, (Ids{"P2"}));
  EXPECT_EQ(diff.added, (Ids{"DE-A"}));
  EXPECT_EQ(diff.removed, (Ids{"NDE"}));
  EXPECT_FALSE(diff.listeners_changed);
}

TEST(SiteDiff, ProfileChangeReachesEveryPointUsingIt) {
  SiteConfig before = Load(Site("", "1480", kDe + kNde + kOther));
  SiteConfig after = Load(Site(", window: hamming", "1480", kDe + kNde + kOther));
  SiteDiff diff = DiffSites(before, after);
  EXPECT_EQ(diff.changed, (Ids{"DE", "NDE"}));
  EXPECT_EQ(diff.unchanged, (Ids{"P2"}));
}

TEST(SiteDiff, MachineChangeReachesItsPoints) {
  SiteConfig before = Load(Site("", "1480", kDe + kNde + kOther));
  SiteConfig after = Load(Site("", "1490", kDe + kNde + kOther));
  SiteDiff diff = DiffSites(before, after);
  EXPECT_EQ(diff.changed, (Ids{"DE", "NDE"}));
  EXPECT_EQ(diff.unchanged, (Ids{"P2"}));
}

TEST(SiteDiff, BandChangeAndListenerChange) {
  SiteConfig before = Load(Site("", "1480", kDe + kOther));
  const std::string de_band =
      "  - {id: DE, machine: P-101, sensor: S-DE, sample_rate_hz: 25600, profile: standard,\n"
      "     bands: [{name: v, lo_hz: 10, hi_hz: 1000}]}\n";
  SiteConfig after = Load(Site("", "1480", de_band + kOther, "7302"));
  SiteDiff diff = DiffSites(before, after);
  EXPECT_EQ(diff.changed, (Ids{"DE"}));
  EXPECT_TRUE(diff.listeners_changed);
  EXPECT_FALSE(diff.storage_changed);
}

TEST(SiteDiff, AlarmSensorCheckAndStorageChanges) {
  const std::string with_band =
      "  - {id: DE, machine: P-101, sensor: S-DE, sample_rate_hz: 25600, profile: standard,\n"
      "     bands: [{name: v, lo_hz: 10, hi_hz: 1000}]";
  SiteConfig before = Load(Site("", "1480", with_band + "}\n" + kOther));
  // A new limit set on DE: DE is rebuilt, P2 is not.
  SiteConfig alarm =
      Load(Site("", "1480",
                with_band + ",\n     alarms: [{measure: v, alert: 2.8, danger: 4.5}]}\n" + kOther));
  SiteDiff diff = DiffSites(before, alarm);
  EXPECT_EQ(diff.changed, (Ids{"DE"}));
  EXPECT_EQ(diff.unchanged, (Ids{"P2"}));
  // Only the on-delay differs: still a change.
  SiteConfig delayed = Load(Site(
      "", "1480",
      with_band + ",\n     alarms: [{measure: v, alert: 2.8, danger: 4.5, on_delay: 2 of 3}]}\n" +
          kOther));
  EXPECT_EQ(DiffSites(alarm, delayed).changed, (Ids{"DE"}));
  // Sensor checks are part of the point too.
  SiteConfig checked =
      Load(Site("", "1480", with_band + ",\n     sensor_checks: {full_scale: 50}}\n" + kOther));
  EXPECT_EQ(DiffSites(before, checked).changed, (Ids{"DE"}));

  // Storage: retention and durability, not only the path.
  SiteConfig retained =
      Load(Site("", "1480", with_band + "}\n" + kOther) + "storage: {retention: {raw_days: 30}}\n");
  SiteDiff storage = DiffSites(before, retained);
  EXPECT_TRUE(storage.storage_changed);
  EXPECT_TRUE(storage.changed.empty());
  SiteConfig durable =
      Load(Site("", "1480", with_band + "}\n" + kOther) + "storage: {durability: normal}\n");
  EXPECT_TRUE(DiffSites(before, durable).storage_changed);
  EXPECT_FALSE(DiffSites(durable, durable).storage_changed);

  // Health and messaging: noticed (they take effect at the next start), points untouched.
  const std::string base = Site("", "1480", with_band + "}\n" + kOther);
  SiteConfig brokered = Load(base + "messaging: {host: 127.0.0.1}\n");
  SiteDiff outlets = DiffSites(before, brokered);
  EXPECT_TRUE(outlets.outlets_changed);
  EXPECT_TRUE(outlets.changed.empty());
  EXPECT_TRUE(
      DiffSites(brokered, Load(base + "messaging: {host: 127.0.0.1, topic_prefix: water}\n"))
          .outlets_changed);
  EXPECT_TRUE(DiffSites(before, Load(base + "health: {port: 7481}\n")).outlets_changed);
  EXPECT_FALSE(DiffSites(brokered, brokered).outlets_changed);
}

}  // namespace
}  // namespace spinward::config
