// ISO 10816-3 / 20816-3 presets. Check values: ISO 10816-3:2009 Annex A, Tables A.1/A.2, as
// transcribed in REFERENCE_VALUES.md (zone boundaries, RMS velocity 10-1000 Hz, and the alarm rule
// example: group 2 rigid, baseline 0.9 mm/s -> alarm 1.6, alarm cap 3.5, trip cap 5.625 mm/s).
#include "spinward/daemon/iso_presets.h"

#include <gtest/gtest.h>

#include <string>

namespace spinward::daemon {
namespace {

struct TableRow {
  IsoMachineGroup group;
  IsoSupport support;
  double ab, bc, cd;
};

// ISO 10816-3:2009 Annex A as transcribed in REFERENCE_VALUES.md.
constexpr TableRow kAnnexA[] = {
    {IsoMachineGroup::kGroup1, IsoSupport::kRigid, 2.3, 4.5, 7.1},
    {IsoMachineGroup::kGroup1, IsoSupport::kFlexible, 3.5, 7.1, 11.0},
    {IsoMachineGroup::kGroup2, IsoSupport::kRigid, 1.4, 2.8, 4.5},
    {IsoMachineGroup::kGroup2, IsoSupport::kFlexible, 2.3, 4.5, 7.1},
};

TEST(IsoPresets, BoundariesMatchAnnexA) {
  for (const auto& row : kAnnexA) {
    IsoZoneBoundaries zones = IsoBoundaries(row.group, row.support);
    EXPECT_DOUBLE_EQ(zones.ab, row.ab);
    EXPECT_DOUBLE_EQ(zones.bc, row.bc);
    EXPECT_DOUBLE_EQ(zones.cd, row.cd);
  }
}

TEST(IsoPresets, AbsoluteLimitsSitAtBCAndCD) {
  for (const auto& row : kAnnexA) {
    IsoPresetLimits limits = IsoAbsoluteLimits(row.group, row.support);
    EXPECT_DOUBLE_EQ(limits.alert, row.bc);
    EXPECT_DOUBLE_EQ(limits.danger, row.cd);
  }
}

TEST(IsoPresets, ClassifiesZones) {
  // Group 2 rigid: A below 1.4, B to 2.8, C to 4.5, D above (Annex A as transcribed).
  IsoZoneBoundaries zones = IsoBoundaries(IsoMachineGroup::kGroup2, IsoSupport::kRigid);
  EXPECT_EQ(ToChar(ClassifyIsoZone(zones, 0.9)), 'A');
  EXPECT_EQ(ToChar(ClassifyIsoZone(zones, 2.0)), 'B');
  EXPECT_EQ(ToChar(ClassifyIsoZone(zones, 3.5)), 'C');
  EXPECT_EQ(ToChar(ClassifyIsoZone(zones, 5.0)), 'D');
  // On a boundary the upper zone applies (our convention, matching alarms that raise at a limit).
  EXPECT_EQ(ToChar(ClassifyIsoZone(zones, 2.8)), 'C');
  // The same 3.5 mm/s is zone B on a group 1 rigid machine (B/C at 4.5).
  EXPECT_EQ(
      ToChar(ClassifyIsoZone(IsoBoundaries(IsoMachineGroup::kGroup1, IsoSupport::kRigid), 3.5)),
      'B');
}

TEST(IsoPresets, BaselineRuleMatchesTheWorkedExample) {
  // Group 2 rigid, baseline 0.9 mm/s: alarm = 0.9 + 0.25 x 2.8 = 1.6 mm/s.
  auto limits = IsoBaselineLimits(IsoMachineGroup::kGroup2, IsoSupport::kRigid, 0.9);
  ASSERT_TRUE(limits.ok()) << limits.message();
  EXPECT_NEAR(limits->alert, 1.6, 1e-12);
  EXPECT_NEAR(limits->danger, 4.5, 1e-12);  // default danger: the C/D boundary
}

TEST(IsoPresets, BaselineAlertIsCappedAt125PercentOfBC) {
  // A high baseline of 3.0 mm/s would give 3.7; the cap is 1.25 x 2.8 = 3.5 mm/s.
  auto limits = IsoBaselineLimits(IsoMachineGroup::kGroup2, IsoSupport::kRigid, 3.0);
  ASSERT_TRUE(limits.ok()) << limits.message();
  EXPECT_NEAR(limits->alert, 3.5, 1e-12);
}

TEST(IsoPresets, DangerMayNotExceed125PercentOfCD) {
  // Trip cap for group 2 rigid: 1.25 x 4.5 = 5.625 mm/s.
  auto at_cap = IsoBaselineLimits(IsoMachineGroup::kGroup2, IsoSupport::kRigid, 0.9, 5.625);
  ASSERT_TRUE(at_cap.ok()) << at_cap.message();
  EXPECT_DOUBLE_EQ(at_cap->danger, 5.625);
  auto above = IsoBaselineLimits(IsoMachineGroup::kGroup2, IsoSupport::kRigid, 0.9, 5.7);
  ASSERT_FALSE(above.ok());
  EXPECT_NE(above.message().find("5.625"), std::string::npos) << above.message();
  // Danger in zone B is not a trip level the standard allows.
  auto in_b = IsoBaselineLimits(IsoMachineGroup::kGroup2, IsoSupport::kRigid, 0.9, 2.0);
  ASSERT_FALSE(in_b.ok());
  EXPECT_NE(in_b.message().find("zone C or D"), std::string::npos);
}

TEST(IsoPresets, RejectsBadInputByName) {
  auto negative = IsoBaselineLimits(IsoMachineGroup::kGroup1, IsoSupport::kFlexible, -1.0);
  ASSERT_FALSE(negative.ok());
  EXPECT_NE(negative.message().find("got -1"), std::string::npos);
  // Danger at B/C with a baseline that puts the alert above it.
  auto crossed = IsoBaselineLimits(IsoMachineGroup::kGroup2, IsoSupport::kRigid, 2.5, 2.8);
  ASSERT_FALSE(crossed.ok());
  EXPECT_NE(crossed.message().find("not below the danger limit 2.8"), std::string::npos)
      << crossed.message();

  EXPECT_EQ(*ParseIsoMachineGroup("2"), IsoMachineGroup::kGroup2);
  EXPECT_EQ(*ParseIsoSupport("flexible"), IsoSupport::kFlexible);
  auto group = ParseIsoMachineGroup("3");
  ASSERT_FALSE(group.ok());
  EXPECT_NE(group.message().find("'3'"), std::string::npos);
  EXPECT_FALSE(ParseIsoSupport("soft").ok());
}

}  // namespace
}  // namespace spinward::daemon
