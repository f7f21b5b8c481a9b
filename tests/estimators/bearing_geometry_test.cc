// Bearing defect frequencies against a published bearing table and the kinematic formulas
// (Harris, "Rolling Bearing Analysis").
#include "spinward/estimators/bearing_geometry.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>

namespace spinward::estimators {
namespace {

using ::testing::HasSubstr;

// The drive-end deep-groove 6205 bearing of the Case Western Reserve University bearing data set:
// n = 9, d = 0.3126 in, D = 1.537 in, phi = 0 (geometry from the data set's published table).
BearingGeometry Cwru6205() {
  BearingGeometry g;
  g.rolling_elements = 9;
  g.element_diameter = 0.3126;
  g.pitch_diameter = 1.537;
  g.contact_angle_deg = 0.0;
  return g;
}

void ExpectRelative(double actual, double expected, double tolerance) {
  EXPECT_LE(std::abs(actual - expected), tolerance * std::abs(expected))
      << "actual " << actual << " expected " << expected;
}

TEST(BearingGeometry, MatchesPublishedCwru6205Multiples) {
  Result<DefectMultiples> m = MultiplesFromGeometry(Cwru6205());
  ASSERT_TRUE(m.ok()) << m.message();
  // Published multiples of shaft speed, CWRU bearing data set table. Relative tolerance 1e-4: the
  // published FTF (0.39828) sits 7.5e-5 off the formula's 0.398307.
  constexpr double kTolerance = 1e-4;
  ExpectRelative(m->bpfi, 5.4152, kTolerance);
  ExpectRelative(m->bpfo, 3.5848, kTolerance);
  ExpectRelative(m->ftf, 0.39828, kTolerance);
  ExpectRelative(m->BallPass(), 4.7135, kTolerance);
}

TEST(BearingGeometry, KinematicIdentitiesHold) {
  // Consequences of the formulas, checked on a bearing with a contact angle: BPFO = n FTF and
  // BPFO + BPFI = n (the elements meet both races once per relative turn).
  BearingGeometry g = Cwru6205();
  g.rolling_elements = 13;
  g.contact_angle_deg = 40.0;
  Result<DefectMultiples> m = MultiplesFromGeometry(g);
  ASSERT_TRUE(m.ok()) << m.message();
  EXPECT_NEAR(m->bpfo, 13.0 * m->ftf, 1e-12);
  EXPECT_NEAR(m->bpfo + m->bpfi, 13.0, 1e-12);
  // A contact angle shortens the effective element-to-pitch ratio: r = (d/D) cos(40 deg), hand
  // value 0.203383 * 0.766044 = 0.155800 (calculator).
  ExpectRelative(m->bpfi - m->bpfo, 13.0 * 0.155800, 1e-5);
}

TEST(BearingGeometry, HzScaleWithShaftRate) {
  Result<DefectMultiples> m = MultiplesFromGeometry(Cwru6205());
  ASSERT_TRUE(m.ok());
  // 1797 r/min, the CWRU data set's no-load speed: 29.95 Hz; BPFO 3.5848 x 29.95 = 107.36 Hz
  // (107.36 Hz at that speed: the data set's table, from memory).
  Result<DefectFrequencies> f = DefectFrequenciesAt(*m, 1797.0 / 60.0);
  ASSERT_TRUE(f.ok()) << f.message();
  ExpectRelative(f->bpfo_hz, 107.36, 2e-4);
  ExpectRelative(f->bpfi_hz, 5.4152 * 29.95, 1e-4);
  ExpectRelative(f->ball_pass_hz, 2.0 * f->bsf_hz, 1e-15);
  ExpectRelative(f->ftf_hz, 0.39828 * 29.95, 1e-4);
}

TEST(BearingGeometry, MultiplesGivenDirectlyAreUsedAsGiven) {
  // A maker's table gives the multiples; no geometry is needed (values invented, Larkfield P-101).
  DefectMultiples m{.ftf = 0.4, .bpfo = 3.6, .bpfi = 5.4, .bsf = 2.35};
  Result<DefectFrequencies> f = DefectFrequenciesAt(m, 24.75);
  ASSERT_TRUE(f.ok()) << f.message();
  EXPECT_DOUBLE_EQ(f->bpfo_hz, 3.6 * 24.75);
  EXPECT_DOUBLE_EQ(f->ball_pass_hz, 4.7 * 24.75);
}

TEST(BearingGeometry, RejectsBadGeometryNamingTheField) {
  BearingGeometry g = Cwru6205();
  g.rolling_elements = 2;
  EXPECT_THAT(g.Validate().message(), HasSubstr("rolling_elements 2"));
  g = Cwru6205();
  g.element_diameter = 1.537;
  EXPECT_THAT(g.Validate().message(), HasSubstr("element_diameter 1.537 must be less than"));
  g = Cwru6205();
  g.pitch_diameter = -1.0;
  EXPECT_THAT(g.Validate().message(), HasSubstr("pitch_diameter -1"));
  g = Cwru6205();
  g.contact_angle_deg = 90.0;
  EXPECT_THAT(g.Validate().message(), HasSubstr("contact_angle_deg 90"));
  g.contact_angle_deg = -5.0;
  Result<DefectMultiples> m = MultiplesFromGeometry(g);
  ASSERT_FALSE(m.ok());
  EXPECT_THAT(m.message(), HasSubstr("contact_angle_deg -5"));
}

TEST(BearingGeometry, RejectsBadMultiplesAndShaftRate) {
  DefectMultiples m{.ftf = 0.4, .bpfo = 3.6, .bpfi = 5.4, .bsf = 2.35};
  ASSERT_TRUE(m.Validate().ok());
  m.bsf = 0.0;
  EXPECT_THAT(m.Validate().message(), HasSubstr("bsf 0"));
  m.bsf = 2.35;
  m.ftf = 1.2;
  EXPECT_THAT(m.Validate().message(), HasSubstr("ftf 1.2"));
  m.ftf = 0.4;
  m.bpfo = 6.0;
  EXPECT_THAT(m.Validate().message(), HasSubstr("bpfo 6 must be less than bpfi 5.4"));
  m.bpfo = 3.6;
  Result<DefectFrequencies> f = DefectFrequenciesAt(m, std::nan(""));
  ASSERT_FALSE(f.ok());
  EXPECT_THAT(f.message(), HasSubstr("shaft_hz nan"));
}

}  // namespace
}  // namespace spinward::estimators
