// StreamingWelch against scipy.signal.welch (SciPy 1.10, Debian's /usr/bin/python3), called live.
// Exponential and peak-hold averages have no SciPy function: the reference combines the per-segment
// periodograms of scipy.signal.spectrogram(mode='psd') with the recurrence / maximum (see
// tests/reference/welch_reference.py).
//
// Tolerance: 1e-9 relative per bin. Bins that are numerically zero (e.g. the DC bin after mean
// removal under a rectangular window) carry only rounding noise of the FFT, of order 1e-16 x the
// peak, where a relative error is meaningless; they are held to an absolute floor of 1e-12 x the
// spectrum's largest value instead.
#include <gtest/gtest.h>

#include <ostream>
#include <string>
#include <vector>

#include "estimators/scipy_reference.h"
#include "spinward/estimators/streaming_welch.h"

namespace spinward::estimators {
namespace {

using spinward::testing::SpectraClose;
using spinward::testing::VibrationLikeSignal;

constexpr double kRelTol = 1e-9;
constexpr double kFloorFraction = 1e-12;

struct Case {
  std::string name;
  std::size_t signal_length = 8000;
  WelchOptions options;
};

// gtest prints a failing parameter with this instead of its bytes.
void PrintTo(const Case& c, std::ostream* os) { *os << c.name; }

WelchOptions Base() {
  WelchOptions o;
  o.sample_rate_hz = 2560.0;
  o.segment_length = 256;
  o.overlap = 128;
  return o;
}

std::vector<Case> Cases() {
  std::vector<Case> cases;
  auto add = [&](std::string name, auto tweak, std::size_t length = 8000) {
    Case c{std::move(name), length, Base()};
    tweak(c.options);
    cases.push_back(std::move(c));
  };
  add("DefaultHannMeanDensity", [](WelchOptions&) {});
  add("OddFftLength", [](WelchOptions& o) {
    o.segment_length = 200;
    o.overlap = 100;
    o.fft_length = 301;
  });
  add("OddSegmentAndFftLength", [](WelchOptions& o) {
    o.segment_length = 255;
    o.overlap = 100;
  });
  add("FftLongerThanSegment", [](WelchOptions& o) { o.fft_length = 1024; });
  add(
      "OverlapSegmentMinusOne",
      [](WelchOptions& o) {
        o.segment_length = 64;
        o.overlap = 63;
      },
      3000);
  add("ZeroOverlap", [](WelchOptions& o) {
    o.segment_length = 250;
    o.overlap = 0;
  });
  add("NonPowerOfTwoSegment", [](WelchOptions& o) {
    o.segment_length = 375;
    o.overlap = 150;
  });
  add("LinearDetrend", [](WelchOptions& o) { o.detrend = Detrend::kLinear; });
  add("NoDetrend", [](WelchOptions& o) { o.detrend = Detrend::kNone; });
  add(
      "MedianOddSegmentCount", [](WelchOptions& o) { o.averaging = Averaging::kMedian; },
      2944 + 128);  // K = floor((3072 - 128) / 128) = 23, odd
  add(
      "MedianEvenSegmentCount", [](WelchOptions& o) { o.averaging = Averaging::kMedian; },
      2944);  // K = floor((2944 - 128) / 128) = 22, even
  add(
      "MedianThreeSegments", [](WelchOptions& o) { o.averaging = Averaging::kMedian; },
      512 + 20);  // K = 3: b(3) = 0.8333
  add("FlatTop", [](WelchOptions& o) { o.window.kind = WindowKind::kFlatTop; });
  add("Kaiser", [](WelchOptions& o) {
    o.window.kind = WindowKind::kKaiser;
    o.window.kaiser_beta = 8.6;
  });
  add("BlackmanHarris", [](WelchOptions& o) { o.window.kind = WindowKind::kBlackmanHarris; });
  add("Blackman", [](WelchOptions& o) { o.window.kind = WindowKind::kBlackman; });
  add("Hamming", [](WelchOptions& o) { o.window.kind = WindowKind::kHamming; });
  add("Rectangular", [](WelchOptions& o) { o.window.kind = WindowKind::kRectangular; });
  add("SpectrumScaling", [](WelchOptions& o) { o.scaling = Scaling::kSpectrum; });
  add("SpectrumScalingZeroPaddedFlatTop", [](WelchOptions& o) {
    o.scaling = Scaling::kSpectrum;
    o.window.kind = WindowKind::kFlatTop;
    o.fft_length = 512;
  });
  add("TwoSidedEvenFft", [](WelchOptions& o) { o.sides = Sides::kTwoSided; });
  add("TwoSidedOddFft", [](WelchOptions& o) {
    o.sides = Sides::kTwoSided;
    o.fft_length = 257;
  });
  add("SymmetricHann", [](WelchOptions& o) { o.window.symmetry = WindowSymmetry::kSymmetric; });
  add("SymmetricKaiserLinear", [](WelchOptions& o) {
    o.window = {WindowKind::kKaiser, WindowSymmetry::kSymmetric, 5.0};
    o.detrend = Detrend::kLinear;
  });
  add("Exponential", [](WelchOptions& o) {
    o.averaging = Averaging::kExponential;
    o.exponential_time_constant_s = 0.5;
  });
  add("ExponentialTwoSidedOddFft", [](WelchOptions& o) {
    o.averaging = Averaging::kExponential;
    o.exponential_time_constant_s = 0.05;
    o.sides = Sides::kTwoSided;
    o.fft_length = 301;
  });
  add("PeakHold", [](WelchOptions& o) { o.averaging = Averaging::kPeakHold; });
  add("PeakHoldSpectrumFlatTop", [](WelchOptions& o) {
    o.averaging = Averaging::kPeakHold;
    o.scaling = Scaling::kSpectrum;
    o.window.kind = WindowKind::kFlatTop;
  });
  add("MedianTwoSided", [](WelchOptions& o) {
    o.averaging = Averaging::kMedian;
    o.sides = Sides::kTwoSided;
  });
  return cases;
}

class ScipyWelchMatrix : public ::testing::TestWithParam<Case> {};

TEST_P(ScipyWelchMatrix, MatchesScipyPerBin) {
  const Case& c = GetParam();
  ASSERT_TRUE(c.options.Validate().ok()) << c.options.Validate().message();
  const std::vector<double> x = VibrationLikeSignal(c.signal_length, c.options.sample_rate_hz, 7);

  const auto reference = spinward::testing::ScipyWelch(x, c.options);
  ASSERT_TRUE(reference.ok) << reference.error;

  const Result<AveragedSpectrum> ours = Welch(x, c.options);
  ASSERT_TRUE(ours.ok()) << ours.message();
  // K = floor((N - D) / H): the segment count SciPy uses (REFERENCE_VALUES.md, SciPy 1.10).
  EXPECT_EQ(ours->segment_count, reference.segments);
  EXPECT_EQ(ours->values.size(), c.options.BinCount());
  EXPECT_TRUE(SpectraClose(ours->values, reference.values, kRelTol, kFloorFraction));
}

INSTANTIATE_TEST_SUITE_P(Scipy, ScipyWelchMatrix, ::testing::ValuesIn(Cases()),
                         [](const ::testing::TestParamInfo<Case>& param_info) {
                           return param_info.param.name;
                         });

}  // namespace
}  // namespace spinward::estimators
