// The kurtogram picks the band where a bearing fault's impacts ring (Antoni 2007), and reads about
// 0 for Gaussian noise and -1 for a steady tone (the definition's values for a complex envelope).
#include "spinward/estimators/kurtogram.h"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <random>
#include <vector>

namespace spinward::estimators {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kFs = 25600.0;

// The synthetic outer-race fault of envelope_spectrum_test.cc: impacts at 88.9 Hz with 1 % jitter
// ringing a 3 kHz resonance (damping 5 %), in Gaussian noise, with shaft lines at 24.8 and 49.6 Hz.
std::vector<double> FaultSignal(bool faulty, unsigned seed) {
  constexpr std::size_t kN = 16384;  // 0.64 s, about 57 impacts
  std::mt19937 rng(seed);
  std::normal_distribution<double> noise(0.0, 0.5);
  std::normal_distribution<double> jitter(0.0, 0.01);
  std::vector<double> x(kN);
  for (std::size_t i = 0; i < kN; ++i) {
    const double t = static_cast<double>(i) / kFs;
    x[i] = noise(rng) + std::sin(2.0 * kPi * 24.8 * t) + 0.4 * std::sin(2.0 * kPi * 49.6 * t);
  }
  if (!faulty) return x;
  const double decay = 2.0 * kPi * 0.05 * 3000.0;
  const auto ring = static_cast<std::size_t>(10.0 / decay * kFs);
  for (double impact = 0.003; impact < static_cast<double>(kN) / kFs;
       impact += (1.0 + jitter(rng)) / 88.9) {
    const auto start = static_cast<std::size_t>(std::ceil(impact * kFs));
    for (std::size_t i = start; i < std::min(kN, start + ring); ++i) {
      const double tau = static_cast<double>(i) / kFs - impact;
      x[i] += std::exp(-decay * tau) * std::sin(2.0 * kPi * 3000.0 * tau);
    }
  }
  return x;
}

TEST(Kurtogram, FindsTheResonanceBandOfTheSyntheticFault) {
  for (unsigned seed : {1u, 2u, 3u}) {
    Result<Kurtogram> k = ComputeKurtogram(FaultSignal(true, seed), kFs, 5, 800.0);
    ASSERT_TRUE(k.ok()) << k.message();
    // The chosen band holds the 3 kHz resonance and is far narrower than the whole 12.8 kHz span
    // (the resonance's half-power width is 2 x 5 % x 3 kHz = 300 Hz).
    EXPECT_LE(k->best.low_hz, 3000.0) << "seed " << seed;
    EXPECT_GE(k->best.high_hz, 3000.0) << "seed " << seed;
    EXPECT_LE(k->best.high_hz - k->best.low_hz, 3200.0) << "seed " << seed;
    // Measured 0.74-0.86 over 49152 samples; the healthy signal stays below 0.3 (next test).
    EXPECT_GT(k->best.kurtosis, 0.5) << "seed " << seed;
  }
}

TEST(Kurtogram, HealthySignalHasNoImpulsiveBand) {
  // Gaussian noise: every band's complex envelope has K near 0. The maximum over 36 bands of
  // 16384 samples scatters a little above 0; 0.3 is far below the fault's values (common
  // practice, no source). The low bands hold the steady shaft tones, which pull K towards -1.
  Result<Kurtogram> k = ComputeKurtogram(FaultSignal(false, 4), kFs, 5, 800.0);
  ASSERT_TRUE(k.ok()) << k.message();
  EXPECT_LT(k->best.kurtosis, 0.3);
  EXPECT_GT(k->best.kurtosis, -0.3);
  EXPECT_LT(k->cells.front().kurtosis, -0.3);  // [0, fs/2]: the shaft tones dominate its power
}

TEST(Kurtogram, GridIsTheOneThirdBinaryTree) {
  std::vector<double> x(4096, 0.0);
  std::mt19937 rng(1);
  std::normal_distribution<double> noise(0.0, 1.0);
  for (double& v : x) v = noise(rng);
  Result<Kurtogram> k = ComputeKurtogram(x, 1000.0, 3, 0.0);
  ASSERT_TRUE(k.ok());
  // 1 + 2 + 3 + 4 + 6 + 8 bands (Antoni 2007, levels 0, 1, 1.6, 2, 2.6, 3).
  EXPECT_EQ(k->cells.size(), 24u);
  EXPECT_DOUBLE_EQ(k->cells[3].high_hz - k->cells[3].low_hz, 500.0 / 3.0);
  EXPECT_FALSE(ComputeKurtogram(std::vector<double>(100, 0.0), 1000.0, 3, 0.0).ok());
}

}  // namespace
}  // namespace spinward::estimators
