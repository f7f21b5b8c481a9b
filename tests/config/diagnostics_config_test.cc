// The machine-aware keys of a site file: a bearing by geometry or by multiples, vanes, the speed
// source, order bands (vane pass from the vane count), an envelope block, a tachometer point, and
// alarms on the new measures by name; bad entries are named.
#include "spinward/config/diagnostics_config.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <string>

#include "spinward/config/site_loader.h"

namespace spinward::config {
namespace {

using ::testing::HasSubstr;

std::string AllProblems(const LoadedSite& loaded) {
  std::string text;
  for (const auto& problem : loaded.problems) text += problem.ToString() + "\n";
  return text;
}

// A Larkfield pump with a 6205 drive-end bearing (CWRU data set geometry), a 6-vane impeller and a
// key-phasor; `extra_point` and `machine_extra` are spliced in by the tests below.
std::string Site(const std::string& machine_extra, const std::string& point_extra,
                 const std::string& alarms = "") {
  return R"(site: {name: Larkfield}
machines:
  - id: P-101
    speed_rpm: 1480
    vanes: 6
    speed_source: tachometer
)" + machine_extra +
         R"(profiles:
  - {id: standard, segment: 4096, interval_s: 2}
points:
  - id: P101-KEY
    machine: P-101
    sensor: LK-P101-KEY
    sample_rate_hz: 2560
    profile: standard
    tachometer: true
  - id: P101-DE-H
    machine: P-101
    sensor: LK-P101-DE-H
    sample_rate_hz: 25600
    profile: standard
    bands:
      - {name: velocity, lo_hz: 10, hi_hz: 1000}
)" + point_extra +
         alarms +
         R"(listeners:
  - {type: tcp, port: 0}
)";
}

const std::string kGeometry = R"(    bearing:
      rolling_elements: 9
      element_diameter: 0.3126
      pitch_diameter: 1.537
      contact_angle_deg: 0
)";

const std::string kOrdersAndEnvelope = R"(    order_bands:
      - {name: 1x, order: 1}
      - {name: 2x, order: 2, half_width: 0.05}
      - {name: vp, order: vane_pass}
      - {name: subsync, lo_order: 0.35, hi_order: 0.48, quantity: displacement}
    envelope: {lo_hz: 2000, hi_hz: 4000, harmonics: 2, tolerance_percent: 1.5}
)";

TEST(DiagnosticsConfig, LoadsBearingOrdersEnvelopeAndTachometer) {
  LoadedSite loaded = ParseSiteText(
      Site(kGeometry, kOrdersAndEnvelope,
           "    alarms:\n      - {measure: env_bpfo_ratio, alert: 4, danger: 8}\n"
           "      - {measure: vp, alert: 2, danger: 4}\n"
           "      - {measure: speed_rpm, alert: 1600, danger: 1700, low_alert: 1300}\n"),
      "site.yaml");
  ASSERT_TRUE(loaded.ok()) << AllProblems(loaded);
  const MachineConfig& machine = loaded.site.machines[0];
  ASSERT_TRUE(machine.diagnostics.bearing.has_value());
  // The 6205 multiples of the CWRU table (BPFO 3.5848, BPFI 5.4152), within 1e-4 relative.
  EXPECT_NEAR(machine.diagnostics.bearing->bpfo, 3.5848, 3.6e-4);
  EXPECT_NEAR(machine.diagnostics.bearing->bpfi, 5.4152, 5.5e-4);
  EXPECT_EQ(machine.diagnostics.vanes, 6);
  EXPECT_EQ(machine.diagnostics.speed_source, SpeedSourceKind::kTachometer);
  const PointConfig& key = loaded.site.points[0];
  EXPECT_TRUE(key.diagnostics.tachometer);
  EXPECT_EQ(DiagnosticMeasureNames(key), std::vector<std::string>{"speed_rpm"});
  const PointConfig& point = loaded.site.points[1];
  const auto& orders = point.diagnostics.order_bands;
  ASSERT_EQ(orders.size(), 4u);
  EXPECT_DOUBLE_EQ(orders[0].lo_order, 0.9);  // default half width 0.1 order
  EXPECT_DOUBLE_EQ(orders[1].hi_order, 2.05);
  EXPECT_DOUBLE_EQ(orders[2].lo_order, 5.9);  // vane pass = 6 vanes x shaft speed
  EXPECT_EQ(orders[3].unit, estimators::Unit::kMicrometres);
  ASSERT_TRUE(point.diagnostics.envelope.has_value());
  EXPECT_EQ(point.diagnostics.envelope->harmonics, 2u);
  EXPECT_EQ(point.diagnostics.envelope->segment, 8192u);
  EXPECT_EQ(point.alarms.size(), 3u);
  EXPECT_EQ(DiagnosticMeasureUnit(point, "env_bpfo"), std::optional<std::string>("g^2"));
  EXPECT_EQ(DiagnosticMeasureUnit(point, "env_bpfo_ratio"), std::optional<std::string>(""));
  EXPECT_EQ(DiagnosticMeasureUnit(point, "vp"), std::optional<std::string>("mm/s"));
  EXPECT_EQ(DiagnosticMeasureUnit(point, "velocity"), std::nullopt);
}

TEST(DiagnosticsConfig, BearingByMultiples) {
  LoadedSite loaded = ParseSiteText(
      Site("    bearing: {ftf: 0.398, bpfo: 3.585, bpfi: 5.415, bsf: 2.357}\n", kOrdersAndEnvelope),
      "site.yaml");
  ASSERT_TRUE(loaded.ok()) << AllProblems(loaded);
  EXPECT_DOUBLE_EQ(loaded.site.machines[0].diagnostics.bearing->bsf, 2.357);
  EXPECT_FALSE(loaded.site.machines[0].diagnostics.bearing_geometry.has_value());
}

TEST(DiagnosticsConfig, ProblemsAreNamed) {
  struct Case {
    std::string machine_extra, point_extra, alarms, expected;
  };
  const Case cases[] = {
      {"    bearing: {rolling_elements: 9, bpfo: 3.5}\n", "", "", "not both"},
      {"    bearing: {rolling_elements: 2, element_diameter: 1, pitch_diameter: 5}\n", "", "",
       "rolling_elements"},
      {"    bearing: {ftf: 0.4, bpfo: 5.5, bpfi: 3.5, bsf: 2}\n", "", "",
       "bpfo 5.5 must be less than bpfi 3.5"},
      {"", "    envelope: {lo_hz: 2000, hi_hz: 4000}\n", "", "need the bearing"},
      {kGeometry, "    envelope: {lo_hz: 2000, hi_hz: 14000}\n", "", "Nyquist"},
      {kGeometry, "    envelope: {lo_hz: 2000}\n", "", "give both lo_hz and hi_hz"},
      {"", "    order_bands: [{name: velocity, order: 1}]\n", "", "already the name"},
      {"", "    order_bands: [{name: a, order: 1, lo_order: 1, hi_order: 2}]\n", "", "not both"},
      {"", "    order_bands: [{name: a, order: impeller}]\n", "", "vane_pass"},
      {"", "    order_bands: [{name: 1x, order: 1}]\n",
       "    alarms: [{measure: env_bpfo, alert: 1, danger: 2}]\n", "unknown measure 'env_bpfo'"},
      {"", "    order_bands: [{name: 1x, order: 1}]\n",
       "    alarms: [{measure: 1x, preset: iso10816-3}]\n", "machine-aware measure"},
      {"    speed_search_percent: 70\n", "", "", "below 50"},
  };
  for (const Case& c : cases) {
    LoadedSite loaded = ParseSiteText(Site(c.machine_extra, c.point_extra, c.alarms), "site.yaml");
    EXPECT_THAT(AllProblems(loaded), HasSubstr(c.expected)) << c.point_extra << c.machine_extra;
  }
}

TEST(DiagnosticsConfig, TachometerMachineNeedsExactlyOnePulsePoint) {
  std::string text = Site("", "");
  text.replace(text.find("    tachometer: true\n"), 21, "");
  LoadedSite loaded = ParseSiteText(text, "site.yaml");
  EXPECT_THAT(AllProblems(loaded), HasSubstr("0 of its points have tachometer: true"));
}

}  // namespace
}  // namespace spinward::config
