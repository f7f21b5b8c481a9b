// Band integration on hand-built spectra, where the exact answer is an integral done on paper.
// The same checks on spectra measured from signals live in physics_test.cc.
#include "spinward/estimators/band_integrator.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <random>
#include <string>
#include <vector>

namespace spinward::estimators {
namespace {

using ::testing::HasSubstr;

constexpr double kPi = std::numbers::pi;

AveragedSpectrum OneSided(double sample_rate_hz, std::size_t fft_length,
                          std::vector<double> values = {}) {
  AveragedSpectrum s;
  s.sample_rate_hz = sample_rate_hz;
  s.fft_length = fft_length;
  s.segment_length = fft_length;
  s.segment_count = 1;
  s.values = values.empty() ? std::vector<double>(fft_length / 2 + 1, 0.0) : std::move(values);
  return s;
}

// The expected one-sided density of white noise: 2 s^2 / fs in every bin except DC and (M even)
// Nyquist, which have no negative-frequency twin to fold in and so hold half (one-sided folding as
// scipy.signal.welch does it, see REFERENCE_VALUES.md).
AveragedSpectrum WhiteDensity(double sample_rate_hz, std::size_t fft_length, double level) {
  AveragedSpectrum s = OneSided(sample_rate_hz, fft_length);
  for (auto& v : s.values) v = level;
  s.values.front() = level / 2.0;
  if (fft_length % 2 == 0) s.values.back() = level / 2.0;
  return s;
}

BandSpec Band(double lo, double hi, Unit unit = Unit::kMetresPerSecondSquared,
              std::string name = "test") {
  BandSpec b;
  b.name = std::move(name);
  b.lo_hz = lo;
  b.hi_hz = hi;
  b.unit = unit;
  return b;
}

double MeanSquare(const AveragedSpectrum& s, const BandSpec& b,
                  Unit input = Unit::kMetresPerSecondSquared) {
  auto v = IntegrateBand(s, b, input);
  EXPECT_TRUE(v.ok()) << v.message();
  return v.ok() ? v->mean_square : std::nan("");
}

TEST(BandIntegrator, FlatDensityGivesLevelTimesBandwidthForAnyEdges) {
  // The integral of a constant density P over [lo, hi] is P (hi - lo) (calculus). With the bin-edge
  // policy this holds for edges anywhere, inside bins, at DC and at Nyquist, for even and odd M.
  std::mt19937_64 rng(20240601);
  for (std::size_t m : {64u, 63u, 1000u}) {
    const double fs = 1024.0;
    const double level = 3.0e-4;
    const AveragedSpectrum s = WhiteDensity(fs, m, level);
    std::uniform_real_distribution<double> edge(0.0, fs / 2.0);
    for (int trial = 0; trial < 200; ++trial) {
      double lo = edge(rng);
      double hi = edge(rng);
      if (lo > hi) std::swap(lo, hi);
      if (hi - lo < 1e-9) continue;
      EXPECT_NEAR(MeanSquare(s, Band(lo, hi)), level * (hi - lo), 1e-12 * level * fs)
          << "M " << m << " band " << lo << ".." << hi;
    }
    EXPECT_NEAR(MeanSquare(s, Band(0.0, fs / 2.0)), level * fs / 2.0, 1e-12 * level * fs);
    EXPECT_NEAR(MeanSquare(s, Band(0.0, 0.1)), level * 0.1, 1e-12 * level * fs);
    EXPECT_NEAR(MeanSquare(s, Band(fs / 2.0 - 0.1, fs / 2.0)), level * 0.1, 1e-12 * level * fs);
  }
}

TEST(BandIntegrator, AdjacentBandsAddUpToTheSpanningBand) {
  // Additivity of the integral over adjacent intervals (calculus); for arbitrary densities, edges
  // off bin boundaries, and integrated quantities too.
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> value(0.0, 1.0);
  const double fs = 5000.0;
  const std::size_t m = 512;
  AveragedSpectrum s = OneSided(fs, m);
  for (auto& v : s.values) v = value(rng);
  std::uniform_real_distribution<double> edge(0.0, fs / 2.0);
  for (Unit unit :
       {Unit::kMetresPerSecondSquared, Unit::kMillimetresPerSecond, Unit::kMicrometres}) {
    for (int trial = 0; trial < 100; ++trial) {
      std::vector<double> e = {edge(rng), edge(rng), edge(rng)};
      std::sort(e.begin(), e.end());
      if (e[1] - e[0] < 1e-6 || e[2] - e[1] < 1e-6) continue;
      const double whole = MeanSquare(s, Band(e[0], e[2], unit));
      const double parts =
          MeanSquare(s, Band(e[0], e[1], unit)) + MeanSquare(s, Band(e[1], e[2], unit));
      EXPECT_NEAR(parts, whole, 1e-12 * whole) << ToString(unit);
    }
  }
}

TEST(BandIntegrator, ValueMovesContinuouslyWithItsEdges) {
  // A band's value changes by at most (largest density) x (edge shift): the integral is Lipschitz
  // in its limits (calculus). DC and Nyquist bins cover half a bin, so their density counts double.
  const double fs = 1000.0;
  const std::size_t m = 100;  // df = 10 Hz
  AveragedSpectrum s = OneSided(fs, m);
  std::mt19937_64 rng(11);
  std::uniform_real_distribution<double> value(0.5, 2.0);
  for (auto& v : s.values) v = value(rng);
  const double bound_density = 2.0 * 2.0;
  const double step = 0.01;  // Hz, sweeping the upper edge across several bin boundaries
  double previous = MeanSquare(s, Band(12.0, 30.0));
  for (double hi = 30.0 + step; hi < 80.0; hi += step) {
    const double current = MeanSquare(s, Band(12.0, hi));
    EXPECT_GE(current, previous);  // density is positive: the value can only grow
    EXPECT_LE(current - previous, bound_density * step * (1 + 1e-9)) << "hi " << hi;
    previous = current;
  }
}

TEST(BandIntegrator, BinCoverageFollowsTheDocumentedIntervals) {
  // Bin m of width df stands for [m df - df/2, m df + df/2]; DC for [0, df/2]; an even FFT's
  // Nyquist bin for [fs/2 - df/2, fs/2] (band_integrator.h). Fractions worked by hand.
  const double df = 10.0;
  EXPECT_DOUBLE_EQ(BinCoverage(3, 6, df, 0.0, 100.0, true), 1.0);
  EXPECT_DOUBLE_EQ(BinCoverage(3, 6, df, 30.0, 100.0, true), 0.5);  // [25, 35] from 30
  EXPECT_DOUBLE_EQ(BinCoverage(3, 6, df, 27.5, 32.5, true), 0.5);
  EXPECT_DOUBLE_EQ(BinCoverage(3, 6, df, 35.0, 100.0, true), 0.0);
  EXPECT_DOUBLE_EQ(BinCoverage(0, 6, df, 0.0, 2.5, true), 0.5);  // DC: [0, 5]
  EXPECT_DOUBLE_EQ(BinCoverage(0, 6, df, 0.0, 5.0, true), 1.0);
  EXPECT_DOUBLE_EQ(BinCoverage(5, 6, df, 47.5, 50.0, true), 0.5);    // Nyquist: [45, 50]
  EXPECT_DOUBLE_EQ(BinCoverage(5, 6, df, 47.5, 50.0, false), 0.25);  // odd M: full [45, 55]
  EXPECT_DOUBLE_EQ(BinCoverage(6, 6, df, 0.0, 100.0, true), 0.0);    // no such bin
}

TEST(BandIntegrator, VelocityAndDisplacementOfALine) {
  // A line of RMS a at angular frequency w has velocity RMS a / w and displacement RMS a / w^2
  // (harmonic motion, x = X sin wt). 10 m/s^2 RMS at w = 1000 rad/s: 10 mm/s and 10 um
  // (REFERENCE_VALUES.md). The line sits on a bin centre, as a density of a^2 / df in one bin.
  const double f = 1000.0 / (2.0 * kPi);  // 159.155 Hz
  const std::size_t m = 1024;
  const double df = f / 50.0;  // line in bin 50
  AveragedSpectrum s = OneSided(df * static_cast<double>(m), m);
  s.values[50] = 10.0 * 10.0 / df;
  auto accel = IntegrateBand(s, Band(100.0, 200.0), Unit::kMetresPerSecondSquared);
  auto velocity = IntegrateBand(s, Band(100.0, 200.0, Unit::kMillimetresPerSecond),
                                Unit::kMetresPerSecondSquared);
  auto displacement =
      IntegrateBand(s, Band(100.0, 200.0, Unit::kMicrometres), Unit::kMetresPerSecondSquared);
  ASSERT_TRUE(accel.ok() && velocity.ok() && displacement.ok());
  EXPECT_NEAR(accel->rms, 10.0, 1e-12);
  EXPECT_NEAR(velocity->rms, 10.0, 1e-9);
  EXPECT_NEAR(displacement->rms, 10.0, 1e-9);
  EXPECT_NEAR(velocity->mean_square, 100.0, 1e-8);
  // The same line in other units: 10 mm/s = 0.3937 in/s (1959 inch); 10 um = 0.3937 mil.
  EXPECT_NEAR(
      IntegrateBand(s, Band(100, 200, Unit::kInchesPerSecond), Unit::kMetresPerSecondSquared)->rms,
      10.0 / 25.4, 1e-12);
  EXPECT_NEAR(IntegrateBand(s, Band(100, 200, Unit::kMils), Unit::kMetresPerSecondSquared)->rms,
              10.0 / 25.4, 1e-12);
}

TEST(BandIntegrator, OneGAt100HzIsAbout15point6MillimetresPerSecond) {
  // 1 g RMS at 100 Hz -> 9.80665 / (2 pi 100) m/s = 15.608 mm/s RMS (REFERENCE_VALUES.md).
  const std::size_t m = 8192;
  const double df = 0.5;  // 100 Hz is bin 200, Nyquist 2048 Hz
  AveragedSpectrum s = OneSided(df * static_cast<double>(m), m);
  s.values[200] = 1.0 / df;  // g^2 / Hz
  auto velocity = IntegrateBand(s, Band(10.0, 1000.0, Unit::kMillimetresPerSecond), Unit::kG);
  ASSERT_TRUE(velocity.ok()) << velocity.message();
  EXPECT_NEAR(velocity->rms, 15.608, 0.0005);
  // Acceleration bands convert between g and m/s^2 (g = 9.80665 m/s^2, CGPM 1901).
  EXPECT_NEAR(IntegrateBand(s, Band(10, 1000, Unit::kMetresPerSecondSquared), Unit::kG)->rms,
              9.80665, 1e-12);
  EXPECT_NEAR(IntegrateBand(s, Band(10, 1000, Unit::kG), Unit::kG)->rms, 1.0, 1e-15);
}

TEST(BandIntegrator, DcNeverEntersAnIntegratedQuantity) {
  // A constant acceleration offset (sensor bias) has no vibration velocity; a band that includes DC
  // measures it as acceleration only (common practice, no source).
  AveragedSpectrum s = OneSided(1000.0, 100);
  s.values[0] = 1e6;
  s.values[10] = 1.0;  // 100 Hz, 10 (m/s^2)^2 with df = 10 Hz
  const double velocity = MeanSquare(s, Band(0.0, 500.0, Unit::kMetresPerSecond));
  EXPECT_NEAR(velocity, 10.0 / std::pow(2 * kPi * 100.0, 2), 1e-15);
  EXPECT_NEAR(MeanSquare(s, Band(0.0, 500.0)), 1e6 * 10.0 + 10.0, 1e-6);
}

TEST(BandIntegrator, RejectsSpectraItCannotIntegrate) {
  AveragedSpectrum good = WhiteDensity(1000.0, 100, 1.0);
  const BandSpec band = Band(10.0, 100.0, Unit::kMillimetresPerSecond, "pump_de_velocity");

  AveragedSpectrum spectrum = good;
  spectrum.scaling = Scaling::kSpectrum;
  auto r = IntegrateBand(spectrum, band, Unit::kG);
  ASSERT_FALSE(r.ok());
  EXPECT_THAT(r.message(), HasSubstr("pump_de_velocity"));
  EXPECT_THAT(r.message(), HasSubstr("density"));

  AveragedSpectrum two_sided = good;
  two_sided.sides = Sides::kTwoSided;
  two_sided.values.assign(100, 1.0);
  r = IntegrateBand(two_sided, band, Unit::kG);
  ASSERT_FALSE(r.ok());
  EXPECT_THAT(r.message(), HasSubstr("two-sided"));

  AveragedSpectrum empty = good;
  empty.values.clear();
  empty.segment_count = 0;
  r = IntegrateBand(empty, band, Unit::kG);
  ASSERT_FALSE(r.ok());
  EXPECT_THAT(r.message(), HasSubstr("empty"));

  AveragedSpectrum wrong_size = good;
  wrong_size.values.resize(40);
  r = IntegrateBand(wrong_size, band, Unit::kG);
  ASSERT_FALSE(r.ok());
  EXPECT_THAT(r.message(), HasSubstr("40 values"));

  r = IntegrateBand(good, Band(10.0, 100.0, Unit::kG), Unit::kMillimetresPerSecond);
  ASSERT_FALSE(r.ok());
  EXPECT_THAT(r.message(), HasSubstr("only integration"));
}

TEST(BandIntegrator, RejectsBandsOutsideTheSpectrumNamingBandFieldAndValue) {
  const AveragedSpectrum s = WhiteDensity(25600.0, 1024, 1.0);  // Nyquist 12800 Hz
  struct Case {
    BandSpec band;
    std::string field;
    std::string value;
  };
  const std::vector<Case> cases = {
      {Band(10.0, 13000.0, Unit::kG, "p101_nde_accel"), "hi_hz", "13000"},
      {Band(-1.0, 100.0, Unit::kG, "p101_nde_accel"), "lo_hz", "-1"},
      {Band(100.0, 100.0, Unit::kG, "p101_nde_accel"), "hi_hz", "100"},
      {Band(200.0, 100.0, Unit::kG, "p101_nde_accel"), "hi_hz", "100"},
      {Band(std::nan(""), 100.0, Unit::kG, "p101_nde_accel"), "lo_hz", "nan"},
  };
  for (const auto& c : cases) {
    auto r = IntegrateBand(s, c.band, Unit::kG);
    ASSERT_FALSE(r.ok()) << c.field << " " << c.value;
    EXPECT_THAT(r.message(), HasSubstr("p101_nde_accel"));
    EXPECT_THAT(r.message(), HasSubstr(c.field + " " + c.value));
    EXPECT_FALSE(c.band.Validate(25600.0).ok());
  }
  EXPECT_THAT(Band(10.0, 13000.0).Validate(25600.0).message(), HasSubstr("12800"));
  EXPECT_TRUE(Band(0.0, 12800.0).Validate(25600.0).ok());  // the whole one-sided range is allowed
  EXPECT_THAT(Band(10.0, 100.0).Validate(0.0).message(), HasSubstr("sample_rate_hz 0"));
}

}  // namespace
}  // namespace spinward::estimators
