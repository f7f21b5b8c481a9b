// Shaft speed from a once-per-revolution pulse train and from the running-speed line of a spectrum,
// and order bands placed at a speed.
#include "spinward/estimators/shaft_speed.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <random>
#include <vector>

namespace spinward::estimators {
namespace {

using ::testing::HasSubstr;
constexpr double kPi = std::numbers::pi;

// A key-phasor style train: 0 V, a 5 V pulse of 10 % of a revolution once per revolution, first
// pulse starting at t0, with a little noise on both levels.
std::vector<double> PulseTrain(double fs, double shaft_hz, double t0, std::size_t n,
                               unsigned seed) {
  std::mt19937 rng(seed);
  std::normal_distribution<double> noise(0.0, 0.05);
  std::vector<double> x(n);
  const double period = 1.0 / shaft_hz;
  for (std::size_t i = 0; i < n; ++i) {
    const double t = static_cast<double>(i) / fs - t0;
    const double phase = t - std::floor(t / period) * period;
    x[i] = (t >= 0.0 && phase < 0.1 * period ? 5.0 : 0.0) + noise(rng);
  }
  return x;
}

TEST(SpeedFromPulses, KnownPulseTrainGivesItsRate) {
  // 1480 rpm (24.667 Hz), a period of 103.78 samples at 2560 Hz: not a whole number, so the edge
  // interpolation is exercised. 4 s hold 98 or 99 pulses.
  constexpr double kFs = 2560.0;
  constexpr double kShaft = 1480.0 / 60.0;
  const auto x = PulseTrain(kFs, kShaft, 0.0123, 10240, 1);
  Result<PulseSpeed> speed = SpeedFromPulses(x, kFs);
  ASSERT_TRUE(speed.ok()) << speed.message();
  // Edges are placed by linear interpolation on a step, so each edge time errs by under one sample
  // (1/2560 s); over 97 periods the rate errs by under 2 samples / 3.9 s, i.e. 2e-4 relative.
  EXPECT_NEAR(speed->shaft_hz, kShaft, 2e-4 * kShaft);
  EXPECT_GE(speed->edges, 98u);
  EXPECT_LE(speed->edges, 99u);
}

TEST(SpeedFromPulses, RingingOnThePulseTopMakesNoExtraEdge) {
  // The hysteresis: a pulse whose top dips to 55 % of the span for one sample is still one pulse.
  constexpr double kFs = 1000.0;
  std::vector<double> x(1000, 0.0);
  for (std::size_t start : {100u, 350u, 600u, 850u}) {
    for (std::size_t i = start; i < start + 20; ++i) x[i] = 10.0;
    x[start + 10] = 5.5;
  }
  Result<PulseSpeed> speed = SpeedFromPulses(x, kFs);
  ASSERT_TRUE(speed.ok()) << speed.message();
  EXPECT_EQ(speed->edges, 4u);
  EXPECT_NEAR(speed->shaft_hz, 4.0, 1e-9);  // edges 0.25 s apart: 4 rev/s
}

TEST(SpeedFromPulses, RejectsAFlatBlockAndASinglePulse) {
  std::vector<double> flat(512, 1.0);
  EXPECT_THAT(SpeedFromPulses(flat, 1000.0).message(), HasSubstr("flat"));
  std::vector<double> one(512, 0.0);
  for (std::size_t i = 100; i < 120; ++i) one[i] = 5.0;
  EXPECT_THAT(SpeedFromPulses(one, 1000.0).message(), HasSubstr("1 pulse edge"));
}

// A one-sided density of a tone in noise, by the periodogram of a Hann-windowed block.
AveragedSpectrum ToneSpectrum(double fs, std::size_t n, double tone_hz) {
  AveragedSpectrum s;
  s.sample_rate_hz = fs;
  s.fft_length = n;
  s.segment_length = n;
  s.segment_count = 1;
  s.values.assign(n / 2 + 1, 0.0);
  std::mt19937 rng(3);
  std::normal_distribution<double> noise(0.0, 0.01);
  std::vector<double> x(n);
  for (std::size_t i = 0; i < n; ++i) {
    const double w =
        0.5 - 0.5 * std::cos(2.0 * kPi * static_cast<double>(i) / static_cast<double>(n));
    x[i] = w * (std::sin(2.0 * kPi * tone_hz * static_cast<double>(i) / fs) + noise(rng));
  }
  for (std::size_t k = 0; k < s.values.size(); ++k) {
    double re = 0.0;
    double im = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
      const double a = 2.0 * kPi * static_cast<double>(k * i % n) / static_cast<double>(n);
      re += x[i] * std::cos(a);
      im -= x[i] * std::sin(a);
    }
    s.values[k] = re * re + im * im;  // the scale does not matter to the peak search
  }
  return s;
}

TEST(SpeedFromSpectrum, FindsTheRunningSpeedLineBetweenBins) {
  // 1 Hz bins; the line at 24.3 Hz sits between bins 24 and 25. A parabola through the three
  // highest bins of a Hann window's power places a line within about 0.1 bin (from memory: the
  // parabolic bias for Hann is largest half-way between bins); 0.15 bin is allowed.
  const AveragedSpectrum s = ToneSpectrum(1024.0, 1024, 24.3);
  Result<SpectrumSpeed> speed = SpeedFromSpectrum(s, 24.67, 0.1);
  ASSERT_TRUE(speed.ok()) << speed.message();
  EXPECT_NEAR(speed->shaft_hz, 24.3, 0.15);
}

TEST(SpeedFromSpectrum, RejectsALineOutsideTheSearchBand) {
  // The tone at 29.5 Hz is 20 % above the nominal 24.67 Hz: the search (+-10 %) sees only its
  // skirt, rising towards the band's upper edge (half a bin off, so the Hann window's sidelobes do
  // not fall on the zeros they have at whole-bin offsets).
  const AveragedSpectrum s = ToneSpectrum(1024.0, 1024, 29.5);
  EXPECT_THAT(SpeedFromSpectrum(s, 24.67, 0.1).message(), HasSubstr("edge"));
}

TEST(OrderBand, FollowsTheShaftSpeed) {
  OrderBandSpec one_x{"1x", 0.9, 1.1, Unit::kMillimetresPerSecond};
  for (double shaft : {10.0, 24.667, 49.5}) {
    Result<BandSpec> band = one_x.AtSpeed(shaft, 2560.0);
    ASSERT_TRUE(band.ok()) << band.message();
    EXPECT_DOUBLE_EQ(band->lo_hz, 0.9 * shaft);
    EXPECT_DOUBLE_EQ(band->hi_hz, 1.1 * shaft);
    EXPECT_EQ(band->name, "1x");
  }
  // A band reaching past Nyquist (1280 Hz here) is clipped there; one starting past it is refused.
  OrderBandSpec high{"vp", 55.0, 60.0, Unit::kMillimetresPerSecond};
  Result<BandSpec> clipped = high.AtSpeed(22.0, 2560.0);
  ASSERT_TRUE(clipped.ok());
  EXPECT_DOUBLE_EQ(clipped->hi_hz, 1280.0);
  EXPECT_THAT(high.AtSpeed(30.0, 2560.0).message(), HasSubstr("Nyquist"));
  EXPECT_THAT((OrderBandSpec{"bad", 1.0, 1.0, Unit::kG}).Validate().message(),
              HasSubstr("hi_order"));
}

}  // namespace
}  // namespace spinward::estimators
