#include "spinward/estimators/overall_indicators.h"

#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <fstream>
#include <limits>
#include <numbers>
#include <random>
#include <sstream>
#include <vector>

#include "support/test_paths.h"

namespace spinward::estimators {
namespace {

constexpr double kPi = std::numbers::pi;

std::vector<double> Sine(std::size_t n, double amplitude, double cycles, double offset = 0.0) {
  std::vector<double> x(n);
  for (std::size_t i = 0; i < n; ++i) {
    x[i] = offset + amplitude * std::sin(2.0 * kPi * cycles * static_cast<double>(i) /
                                         static_cast<double>(n));
  }
  return x;
}

OverallIndicators Indicators(const std::vector<double>& x) {
  IndicatorAccumulator acc;
  EXPECT_TRUE(acc.Add(x));
  return acc.Current();
}

TEST(IndicatorAccumulator, SineHasTheTextbookRatios) {
  // A sine of amplitude A: RMS A / sqrt(2), crest factor sqrt(2), peak-to-peak 2A = 2 sqrt(2) RMS,
  // kurtosis 3/2 (REFERENCE_VALUES.md; E[sin^4] / E[sin^2]^2 = (3/8) / (1/4)). Whole periods, so
  // the sampled averages equal the continuous ones; 4096 points per 7 cycles hit the peaks to 1e-6.
  const auto ind = Indicators(Sine(4096 * 7, 3.0, 7.0, 0.25));
  EXPECT_EQ(ind.count, 4096u * 7u);
  EXPECT_NEAR(ind.mean, 0.25, 1e-12);
  EXPECT_NEAR(ind.rms, 3.0 / std::sqrt(2.0), 1e-12);
  EXPECT_NEAR(ind.crest_factor, std::sqrt(2.0), 1e-6);
  EXPECT_NEAR(ind.peak, 3.0, 1e-5);
  EXPECT_NEAR(ind.peak_to_peak / ind.rms, 2.0 * std::sqrt(2.0), 1e-6);
  EXPECT_NEAR(ind.kurtosis, 1.5, 1e-12);
  EXPECT_NEAR(ind.max, 3.25, 1e-5);
  EXPECT_NEAR(ind.min, -2.75, 1e-5);
}

TEST(IndicatorAccumulator, GaussianNoiseHasKurtosisThree) {
  // Kurtosis of a normal distribution is 3 (REFERENCE_VALUES.md). The sample kurtosis of n normal
  // samples has standard error about sqrt(24 / n) (Kendall & Stuart; from memory): for n = 1e6 that
  // is 0.0049, so 0.03 is a six-sigma bound. Crest factor of 1e6 normal samples: the largest |z| of
  // 1e6 draws is about sqrt(2 ln 1e6) = 5.3 (extreme-value rule of thumb, from memory), so 4
  // to 6.5.
  std::mt19937_64 rng(42);
  std::normal_distribution<double> normal(0.0, 2.0);
  std::vector<double> x(1'000'000);
  for (auto& v : x) v = 5.0 + normal(rng);
  const auto ind = Indicators(x);
  EXPECT_NEAR(ind.kurtosis, 3.0, 0.03);
  EXPECT_NEAR(ind.rms, 2.0, 2.0 * 0.005);  // std error of s is s / sqrt(2n) = 0.0014 s; 3.5 sigma
  EXPECT_NEAR(ind.mean, 5.0, 0.01);        // std error 2 / sqrt(n) = 0.002; 5 sigma
  EXPECT_GT(ind.crest_factor, 4.0);
  EXPECT_LT(ind.crest_factor, 6.5);
}

TEST(IndicatorAccumulator, MatchesScipyOnASkewedSignal) {
  // scipy.stats.kurtosis(fisher=False) (population m4 / m2^2), numpy.std (ddof=0), numpy.mean and
  // numpy.ptp as the outside reference, through Debian's /usr/bin/python3.
  std::mt19937_64 rng(3);
  std::exponential_distribution<double> burst(4.0);
  std::vector<double> x(20011);
  for (std::size_t i = 0; i < x.size(); ++i) {
    x[i] = 120.0 + 0.1 * std::sin(0.05 * static_cast<double>(i)) + burst(rng);
  }
  const auto dir = testing::FreshTempDir("indicators-scipy");
  const auto path = dir / "x.txt";
  {
    std::ofstream out(path);
    out.precision(17);
    for (double v : x) out << v << '\n';
  }
  const std::string script =
      "import numpy as np, scipy.stats as st; x = np.loadtxt('" + path.string() +
      "'); m = x.mean(); print(repr(m), repr(x.std()), repr(st.kurtosis(x, fisher=False)), "
      "repr(np.ptp(x)), repr(np.max(np.abs(x - m))))";
  const auto run = testing::RunCommand(testing::ReferencePython() + " -c \"" + script + "\"");
  ASSERT_EQ(run.exit_code, 0) << run.error_output;
  std::istringstream in(run.output);
  double mean = 0, std_dev = 0, kurtosis = 0, ptp = 0, peak = 0;
  in >> mean >> std_dev >> kurtosis >> ptp >> peak;
  ASSERT_TRUE(in) << run.output;

  // Fed in uneven blocks, as a pipeline would.
  IndicatorAccumulator acc;
  for (std::size_t i = 0; i < x.size(); i += 1000) {
    ASSERT_TRUE(
        acc.Add(std::span<const double>(x).subspan(i, std::min<std::size_t>(1000, x.size() - i))));
  }
  const auto ind = acc.Current();
  EXPECT_NEAR(ind.mean, mean, 1e-12 * std::abs(mean));
  EXPECT_NEAR(ind.rms, std_dev, 1e-10 * std_dev);
  EXPECT_NEAR(ind.kurtosis, kurtosis, 1e-10 * kurtosis);
  EXPECT_NEAR(ind.peak_to_peak, ptp, 1e-12 * ptp);
  EXPECT_NEAR(ind.peak, peak, 1e-10 * peak);
  EXPECT_NEAR(ind.crest_factor, peak / std_dev, 1e-9);
  EXPECT_GT(kurtosis, 4.0);  // the reference really is skewed and heavy-tailed, not sine-like
}

TEST(IndicatorAccumulator, LargeOffsetKeepsSmallVibrationAccurate) {
  // 1e6 DC (a badly biased or unscaled channel) under a 1e-3 amplitude sine. Reference: the
  // two-pass formula sqrt(mean((x - mean(x))^2)) (Chan, Golub & LeVeque 1983, "Algorithms for
  // computing the sample variance"), and the exact 1e-3 / sqrt(2) of a sine over whole periods.
  const auto x = Sine(100'000, 1e-3, 50.0, 1e6);
  double sum = 0.0;
  for (double v : x) sum += v;
  const double mean = sum / static_cast<double>(x.size());
  double sq = 0.0;
  double raw_sq = 0.0;
  for (double v : x) {
    sq += (v - mean) * (v - mean);
    raw_sq += v * v;
  }
  const double two_pass_rms = std::sqrt(sq / static_cast<double>(x.size()));
  // The one-pass raw-power formula loses the vibration entirely here: this case is a real test.
  const double naive_ms = raw_sq / static_cast<double>(x.size()) - mean * mean;
  EXPECT_GT(std::abs(naive_ms - 0.5e-6), 0.5e-6 * 0.1);

  IndicatorAccumulator acc;
  for (std::size_t i = 0; i < x.size(); i += 4096) {
    ASSERT_TRUE(
        acc.Add(std::span<const double>(x).subspan(i, std::min<std::size_t>(4096, x.size() - i))));
  }
  const auto ind = acc.Current();
  // The samples themselves are rounded to ulp(1e6) = 1.2e-10, so 1e-3 relative is the honest bound.
  EXPECT_NEAR(ind.rms, two_pass_rms, 1e-6 * two_pass_rms);
  EXPECT_NEAR(ind.rms, 1e-3 / std::sqrt(2.0), 1e-3 * 1e-3);
  EXPECT_NEAR(ind.kurtosis, 1.5, 1e-3);
  EXPECT_NEAR(ind.crest_factor, std::sqrt(2.0), 1e-3);
  EXPECT_NEAR(ind.mean, 1e6, 1e-9);
}

TEST(IndicatorAccumulator, BlockSizeDoesNotChangeTheResult) {
  // Merging is exact algebra (Pebay 2008), so any split of the stream gives the same moments up to
  // rounding; here, block sizes 1, 7, 1000 and the whole signal, and two accumulators merged.
  std::mt19937_64 rng(5);
  std::student_t_distribution<double> heavy(5.0);
  std::vector<double> x(30'000);
  for (std::size_t i = 0; i < x.size(); ++i) {
    x[i] = 2.0 + heavy(rng) + std::sin(0.01 * static_cast<double>(i));
  }
  const auto whole = Indicators(x);
  for (std::size_t block : {1u, 7u, 1000u}) {
    IndicatorAccumulator acc;
    for (std::size_t i = 0; i < x.size(); i += block) {
      ASSERT_TRUE(acc.Add(std::span<const double>(x).subspan(i, std::min(block, x.size() - i))));
    }
    const auto ind = acc.Current();
    EXPECT_EQ(ind.count, whole.count);
    EXPECT_NEAR(ind.mean, whole.mean, 1e-12 * std::abs(whole.mean)) << block;
    EXPECT_NEAR(ind.rms, whole.rms, 1e-12 * whole.rms) << block;
    EXPECT_NEAR(ind.kurtosis, whole.kurtosis, 1e-11 * whole.kurtosis) << block;
    EXPECT_NEAR(ind.peak, whole.peak, 1e-12 * whole.peak) << block;
    EXPECT_EQ(ind.min, whole.min);
    EXPECT_EQ(ind.max, whole.max);
  }
  IndicatorAccumulator first;
  IndicatorAccumulator second;
  ASSERT_TRUE(first.Add(std::span<const double>(x).first(12'345)));
  ASSERT_TRUE(second.Add(std::span<const double>(x).subspan(12'345)));
  first.Merge(second);
  EXPECT_NEAR(first.Current().kurtosis, whole.kurtosis, 1e-11 * whole.kurtosis);
  EXPECT_NEAR(first.Current().rms, whole.rms, 1e-12 * whole.rms);
}

TEST(IndicatorAccumulator, PeakIsTheLargestExcursionFromTheMean) {
  // {0, 0, 0, 10}: mean 2.5, deviations -2.5 (x3) and 7.5; peak 7.5, peak-to-peak 10,
  // m2 = (3 x 6.25 + 56.25) / 4 = 18.75, m4 = (3 x 39.0625 + 3164.0625) / 4 = 820.3125,
  // kurtosis 820.3125 / 18.75^2 = 2.3333 (worked by hand).
  const auto ind = Indicators({0.0, 0.0, 0.0, 10.0});
  EXPECT_DOUBLE_EQ(ind.mean, 2.5);
  EXPECT_DOUBLE_EQ(ind.peak, 7.5);
  EXPECT_DOUBLE_EQ(ind.peak_to_peak, 10.0);
  EXPECT_DOUBLE_EQ(ind.rms, std::sqrt(18.75));
  EXPECT_DOUBLE_EQ(ind.crest_factor, 7.5 / std::sqrt(18.75));
  EXPECT_DOUBLE_EQ(ind.kurtosis, 820.3125 / (18.75 * 18.75));
}

TEST(IndicatorAccumulator, DegenerateIntervalsGiveZerosNotNaN) {
  // Documented choice (overall_indicators.h): 0/0 ratios are reported as 0 (no source).
  IndicatorAccumulator empty;
  const auto none = empty.Current();
  EXPECT_EQ(none.count, 0u);
  EXPECT_EQ(none.rms, 0.0);
  EXPECT_EQ(none.crest_factor, 0.0);
  EXPECT_EQ(none.kurtosis, 0.0);

  const auto one = Indicators({4.5});
  EXPECT_EQ(one.count, 1u);
  EXPECT_EQ(one.mean, 4.5);
  EXPECT_EQ(one.min, 4.5);
  EXPECT_EQ(one.max, 4.5);
  EXPECT_EQ(one.rms, 0.0);
  EXPECT_EQ(one.peak, 0.0);
  EXPECT_EQ(one.crest_factor, 0.0);
  EXPECT_EQ(one.kurtosis, 0.0);

  // A flatlined channel stuck at a value that is not exact in binary, over blocks of mixed sizes.
  IndicatorAccumulator flat;
  const std::vector<double> stuck(1000, 0.1 + 1e6);
  ASSERT_TRUE(flat.Add(stuck));
  ASSERT_TRUE(flat.Add(std::span<const double>(stuck).first(3)));
  const auto constant = flat.Current();
  EXPECT_EQ(constant.mean, 0.1 + 1e6);
  EXPECT_EQ(constant.rms, 0.0);
  EXPECT_EQ(constant.peak_to_peak, 0.0);
  EXPECT_EQ(constant.crest_factor, 0.0);
  EXPECT_EQ(constant.kurtosis, 0.0);
  EXPECT_FALSE(std::isnan(constant.kurtosis));

  // Deviations ~1e-160: their squares are subnormal, m2^2 and m4 underflow to 0; still no NaN.
  const auto tiny = Indicators({1e-160, -1e-160, 3e-160});
  EXPECT_GT(tiny.rms, 0.0);
  EXPECT_TRUE(std::isfinite(tiny.kurtosis));
  EXPECT_TRUE(std::isfinite(tiny.crest_factor));
}

TEST(IndicatorAccumulator, RejectsNonFiniteBlocksWhole) {
  IndicatorAccumulator acc;
  ASSERT_TRUE(acc.Add(std::vector<double>{1.0, -1.0}));
  EXPECT_FALSE(acc.Add(std::vector<double>{1.0, std::numeric_limits<double>::quiet_NaN(), 3.0}));
  EXPECT_FALSE(acc.Add(std::vector<double>{std::numeric_limits<double>::infinity()}));
  EXPECT_EQ(acc.rejected_blocks(), 2u);
  EXPECT_EQ(acc.rejected_samples(), 4u);
  const auto ind = acc.Current();
  EXPECT_EQ(ind.count, 2u);
  EXPECT_EQ(ind.mean, 0.0);
  EXPECT_EQ(ind.rms, 1.0);
  acc.Reset();
  EXPECT_EQ(acc.count(), 0u);
  EXPECT_EQ(acc.rejected_blocks(), 0u);
  EXPECT_EQ(acc.Current().rms, 0.0);
}

}  // namespace
}  // namespace spinward::estimators
