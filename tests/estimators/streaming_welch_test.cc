// StreamingWelch's streaming behaviour: block boundaries, gaps, bad samples, interval averages and
// option validation. The reference for "correct" here is the batch estimate over the same samples,
// itself checked against SciPy in scipy_welch_test.cc; a few physical checks use textbook facts.
#include "spinward/estimators/streaming_welch.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <random>
#include <string>
#include <thread>
#include <vector>

#include "estimators/scipy_reference.h"
#include "spinward/estimators/fft_plan_cache.h"

namespace spinward::estimators {
namespace {

using spinward::testing::SpectraClose;
using spinward::testing::VibrationLikeSignal;

// Streaming and batch run the same arithmetic on the same samples; 1e-12 relative leaves room only
// for rounding, with the same 1e-12 x peak floor for numerically-zero bins as the SciPy tests.
constexpr double kStreamTol = 1e-12;

WelchOptions Base() {
  WelchOptions o;
  o.sample_rate_hz = 1000.0;
  o.segment_length = 128;
  o.overlap = 64;
  return o;
}

StreamingWelch MakeOrDie(const WelchOptions& options) {
  Result<StreamingWelch> welch = StreamingWelch::Create(options);
  EXPECT_TRUE(welch.ok()) << welch.message();
  return std::move(welch).value();
}

AveragedSpectrum BatchOrDie(std::span<const double> x, const WelchOptions& options) {
  Result<AveragedSpectrum> result = Welch(x, options);
  EXPECT_TRUE(result.ok()) << result.message();
  return std::move(result).value();
}

// Pushes x in random blocks of 1 .. max_block samples.
void PushInRandomBlocks(StreamingWelch& welch, std::span<const double> x, std::size_t max_block,
                        std::uint64_t seed, const StreamingWelch::AverageCallback& cb = {}) {
  std::mt19937_64 rng(seed);
  std::uniform_int_distribution<std::size_t> size(1, max_block);
  std::size_t pos = 0;
  while (pos < x.size()) {
    const std::size_t n = std::min(size(rng), x.size() - pos);
    ASSERT_TRUE(welch.Push(x.subspan(pos, n), cb).ok());
    pos += n;
    ASSERT_LT(welch.buffered_samples(), welch.options().segment_length);
  }
}

std::vector<WelchOptions> StreamingCases() {
  std::vector<WelchOptions> cases;
  auto add = [&](auto tweak) {
    WelchOptions o = Base();
    tweak(o);
    cases.push_back(o);
  };
  add([](WelchOptions&) {});
  add([](WelchOptions& o) { o.overlap = 127; });
  add([](WelchOptions& o) { o.overlap = 0; });
  add([](WelchOptions& o) {
    o.segment_length = 100;
    o.overlap = 33;
    o.fft_length = 257;
    o.detrend = Detrend::kLinear;
  });
  add([](WelchOptions& o) { o.averaging = Averaging::kMedian; });
  add([](WelchOptions& o) {
    o.averaging = Averaging::kExponential;
    o.exponential_time_constant_s = 0.2;
  });
  add([](WelchOptions& o) {
    o.averaging = Averaging::kPeakHold;
    o.sides = Sides::kTwoSided;
    o.window.kind = WindowKind::kFlatTop;
    o.scaling = Scaling::kSpectrum;
  });
  return cases;
}

TEST(StreamingWelch, BlockBoundariesDoNotChangeTheResult) {
  const std::vector<double> x = VibrationLikeSignal(20000, 1000.0, 11);
  for (const WelchOptions& options : StreamingCases()) {
    SCOPED_TRACE("averaging " + std::string(ToString(options.averaging)) + ", L " +
                 std::to_string(options.segment_length) + ", D " + std::to_string(options.overlap));
    const AveragedSpectrum batch = BatchOrDie(x, options);
    // K = floor((N - D) / H) (SciPy 1.10's segmentation, REFERENCE_VALUES.md).
    ASSERT_EQ(batch.segment_count, (x.size() - options.overlap) / options.Hop());
    for (std::uint64_t seed : {1, 2, 3}) {
      StreamingWelch welch = MakeOrDie(options);
      PushInRandomBlocks(welch, x, 10 * options.segment_length, seed);
      EXPECT_EQ(welch.segments_total(), batch.segment_count);
      const AveragedSpectrum streamed = welch.TakeAverage();
      EXPECT_EQ(streamed.segment_count, batch.segment_count);
      EXPECT_TRUE(SpectraClose(streamed.values, batch.values, kStreamTol, kStreamTol));
    }
  }
}

TEST(StreamingWelch, OneSampleAtATimeGivesTheBatchResult) {
  const std::vector<double> x = VibrationLikeSignal(3000, 1000.0, 5);
  WelchOptions options = Base();
  options.overlap = 100;
  options.averaging = Averaging::kMedian;
  StreamingWelch welch = MakeOrDie(options);
  for (double sample : x) ASSERT_TRUE(welch.Push({&sample, 1}).ok());
  const AveragedSpectrum batch = BatchOrDie(x, options);
  EXPECT_EQ(welch.buffered_samples(), (x.size() - options.overlap) % options.Hop() +
                                          options.overlap);  // what remains after the last segment
  EXPECT_TRUE(SpectraClose(welch.CurrentAverage().values, batch.values, kStreamTol, kStreamTol));
}

TEST(StreamingWelch, ResetDropsThePartialSegment) {
  // Mean of all segments = the segment-count-weighted mean of the two pieces' batch averages; no
  // segment may straddle the gap.
  const std::vector<double> x = VibrationLikeSignal(5000, 1000.0, 3);
  const std::span<const double> a = std::span(x).first(2345);
  const std::span<const double> b = std::span(x).subspan(2345);
  const WelchOptions options = Base();
  StreamingWelch welch = MakeOrDie(options);
  PushInRandomBlocks(welch, a, 300, 9);
  EXPECT_GT(welch.buffered_samples(), 0u);
  welch.Reset();
  EXPECT_EQ(welch.buffered_samples(), 0u);
  PushInRandomBlocks(welch, b, 300, 10);

  const AveragedSpectrum batch_a = BatchOrDie(a, options);
  const AveragedSpectrum batch_b = BatchOrDie(b, options);
  const double ka = static_cast<double>(batch_a.segment_count);
  const double kb = static_cast<double>(batch_b.segment_count);
  std::vector<double> expected(batch_a.values.size());
  for (std::size_t m = 0; m < expected.size(); ++m) {
    expected[m] = (ka * batch_a.values[m] + kb * batch_b.values[m]) / (ka + kb);
  }
  const AveragedSpectrum streamed = welch.TakeAverage();
  EXPECT_EQ(streamed.segment_count, batch_a.segment_count + batch_b.segment_count);
  EXPECT_TRUE(SpectraClose(streamed.values, expected, 1e-12, 1e-12));
}

TEST(StreamingWelch, NonFiniteBlockIsRejectedWholeAndCounted) {
  const std::vector<double> x = VibrationLikeSignal(4000, 1000.0, 4);
  const WelchOptions options = Base();
  StreamingWelch welch = MakeOrDie(options);
  ASSERT_TRUE(welch.Push(std::span(x).first(2000)).ok());
  const AveragedSpectrum before = welch.CurrentAverage();

  std::vector<double> bad(x.begin() + 2000, x.begin() + 2500);
  bad[17] = std::numeric_limits<double>::quiet_NaN();
  bad[300] = std::numeric_limits<double>::infinity();
  const Status status = welch.Push(bad);
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.message().find("2 non-finite"), std::string::npos) << status.message();
  EXPECT_NE(status.message().find("index 17"), std::string::npos) << status.message();
  EXPECT_EQ(welch.rejected_blocks(), 1u);
  EXPECT_EQ(welch.rejected_samples(), 500u);
  EXPECT_EQ(welch.buffered_samples(), 0u);  // the bad block is a gap: the partial segment goes too

  const AveragedSpectrum after = welch.CurrentAverage();
  EXPECT_EQ(after.segment_count, before.segment_count);
  EXPECT_EQ(after.values, before.values);  // nothing of the bad block reached the average

  // The stream resumes after the gap as after Reset(): equal to the two clean pieces combined.
  ASSERT_TRUE(welch.Push(std::span(x).subspan(2500)).ok());
  const AveragedSpectrum first = BatchOrDie(std::span(x).first(2000), options);
  const AveragedSpectrum second = BatchOrDie(std::span(x).subspan(2500), options);
  const double k1 = static_cast<double>(first.segment_count);
  const double k2 = static_cast<double>(second.segment_count);
  std::vector<double> expected(first.values.size());
  for (std::size_t m = 0; m < expected.size(); ++m) {
    expected[m] = (k1 * first.values[m] + k2 * second.values[m]) / (k1 + k2);
    EXPECT_TRUE(std::isfinite(welch.CurrentAverage().values[m]));
  }
  EXPECT_TRUE(SpectraClose(welch.CurrentAverage().values, expected, 1e-12, 1e-12));
}

// The segments of interval i are segments iN .. iN + N - 1, i.e. samples [iNH, iNH + (N-1)H + L).
std::span<const double> IntervalSamples(std::span<const double> x, const WelchOptions& o,
                                        std::size_t first_segment, std::size_t segments) {
  return x.subspan(first_segment * o.Hop(), (segments - 1) * o.Hop() + o.segment_length);
}

TEST(StreamingWelch, CallbackDeliversEachCompletedInterval) {
  for (Averaging averaging : {Averaging::kMean, Averaging::kMedian, Averaging::kPeakHold}) {
    SCOPED_TRACE(std::string(ToString(averaging)));
    const std::vector<double> x = VibrationLikeSignal(128 + 22 * 64 + 10, 1000.0, 8);  // K = 23
    WelchOptions options = Base();
    options.averaging = averaging;
    options.segments_per_average = 5;
    StreamingWelch welch = MakeOrDie(options);
    std::vector<AveragedSpectrum> reports;
    PushInRandomBlocks(welch, x, 700, 21,
                       [&](const AveragedSpectrum& average) { reports.push_back(average); });
    ASSERT_EQ(reports.size(), 4u);  // 23 segments: four intervals of 5, three segments left
    for (std::size_t i = 0; i < reports.size(); ++i) {
      EXPECT_EQ(reports[i].segment_count, 5u);
      const AveragedSpectrum expected = BatchOrDie(IntervalSamples(x, options, 5 * i, 5), options);
      EXPECT_EQ(expected.segment_count, 5u);
      EXPECT_TRUE(SpectraClose(reports[i].values, expected.values, 1e-12, 1e-12))
          << "interval " << i;
    }
    EXPECT_EQ(welch.segments_in_average(), 3u);
    const AveragedSpectrum rest = welch.TakeAverage();
    const AveragedSpectrum expected = BatchOrDie(IntervalSamples(x, options, 20, 3), options);
    EXPECT_TRUE(SpectraClose(rest.values, expected.values, 1e-12, 1e-12));
    EXPECT_EQ(welch.segments_in_average(), 0u);
    EXPECT_TRUE(welch.CurrentAverage().values.empty());
  }
}

TEST(StreamingWelch, ExponentialKeepsItsStateAcrossReports) {
  const std::vector<double> x = VibrationLikeSignal(128 + 19 * 64, 1000.0, 12);  // K = 20
  WelchOptions options = Base();
  options.averaging = Averaging::kExponential;
  options.exponential_time_constant_s = 0.3;
  options.segments_per_average = 4;
  StreamingWelch welch = MakeOrDie(options);
  std::vector<AveragedSpectrum> reports;
  PushInRandomBlocks(welch, x, 500, 5,
                     [&](const AveragedSpectrum& average) { reports.push_back(average); });
  ASSERT_EQ(reports.size(), 5u);
  for (std::size_t i = 0; i < reports.size(); ++i) {
    // Report i is the running value after 4(i + 1) segments, as a batch exponential average
    // over those segments from the start.
    const AveragedSpectrum expected =
        BatchOrDie(IntervalSamples(x, options, 0, 4 * (i + 1)), options);
    EXPECT_EQ(reports[i].segment_count, 4 * (i + 1));
    EXPECT_TRUE(SpectraClose(reports[i].values, expected.values, 1e-12, 1e-12)) << "report " << i;
  }
}

TEST(StreamingWelch, WhiteNoiseDensityIsTwoSigmaSquaredOverFs) {
  // REFERENCE_VALUES.md: white noise of variance s^2 at rate fs has one-sided density 2 s^2 / fs.
  // 1000 segments of 256: the mean over the 127 inner bins has a relative spread of about
  // 1 / sqrt(1000 x 127 / 2) = 0.4 %; 2 % is five times that.
  const double fs = 2000.0;
  const double sigma = 3.0;
  std::mt19937_64 rng(99);
  std::normal_distribution<double> noise(0.0, sigma);
  std::vector<double> x(256 * 1000);
  for (double& v : x) v = noise(rng);
  WelchOptions options;
  options.sample_rate_hz = fs;
  options.segment_length = 256;
  options.overlap = 0;
  const AveragedSpectrum psd = BatchOrDie(x, options);
  double inner = 0.0;
  for (std::size_t m = 1; m < 128; ++m) inner += psd.values[m];
  EXPECT_NEAR(inner / 127.0, 2.0 * sigma * sigma / fs, 0.02 * 2.0 * sigma * sigma / fs);
}

TEST(StreamingWelch, FlatTopSpectrumReadsASinesMeanSquare) {
  // Trade practice: with 'spectrum' scaling and a flat-top window the peak bin reads the sine's
  // mean square A^2 / 2 within the flat-top's scalloping loss (about 0.01 dB = 0.23 % in power),
  // wherever the tone falls between bins.
  const double fs = 1000.0;
  const double amplitude = 4.0;
  for (double f : {100.0, 101.3, 102.5}) {
    std::vector<double> x(8192);
    for (std::size_t n = 0; n < x.size(); ++n) {
      x[n] = amplitude * std::sin(2.0 * std::numbers::pi * f * static_cast<double>(n) / fs);
    }
    WelchOptions options;
    options.sample_rate_hz = fs;
    options.segment_length = 1000;
    options.overlap = 500;
    options.window.kind = WindowKind::kFlatTop;
    options.scaling = Scaling::kSpectrum;
    const AveragedSpectrum spectrum = BatchOrDie(x, options);
    const double peak = *std::max_element(spectrum.values.begin(), spectrum.values.end());
    EXPECT_NEAR(peak, amplitude * amplitude / 2.0, 0.005 * amplitude * amplitude / 2.0) << f;
  }
}

TEST(StreamingWelch, ShorterThanOneSegmentGivesNoValues) {
  // Our documented choice (SciPy would shrink nperseg to the signal length).
  const std::vector<double> x(100, 1.0);
  WelchOptions options = Base();  // L = 128
  const AveragedSpectrum result = BatchOrDie(x, options);
  EXPECT_TRUE(result.values.empty());
  EXPECT_EQ(result.segment_count, 0u);
  EXPECT_EQ(result.fft_length, 128u);
  EXPECT_EQ(result.sample_rate_hz, 1000.0);
}

TEST(StreamingWelch, TwoSidedFrequenciesFollowNumpyFftfreq) {
  // numpy.fft.fftfreq(8, d=0.1) = [0, 1.25, 2.5, 3.75, -5, -3.75, -2.5, -1.25] (numpy docs);
  // fftfreq(5, d=1) = [0, 0.2, 0.4, -0.4, -0.2].
  AveragedSpectrum even;
  even.sample_rate_hz = 10.0;
  even.fft_length = 8;
  even.sides = Sides::kTwoSided;
  even.values.assign(8, 0.0);
  const std::vector<double> expected_even = {0, 1.25, 2.5, 3.75, -5, -3.75, -2.5, -1.25};
  const std::vector<double> got_even = even.FrequenciesHz();
  for (std::size_t m = 0; m < 8; ++m) EXPECT_DOUBLE_EQ(got_even[m], expected_even[m]) << m;

  AveragedSpectrum odd = even;
  odd.sample_rate_hz = 1.0;
  odd.fft_length = 5;
  odd.values.assign(5, 0.0);
  const std::vector<double> expected_odd = {0, 0.2, 0.4, -0.4, -0.2};
  for (std::size_t m = 0; m < 5; ++m) EXPECT_DOUBLE_EQ(odd.FrequencyHz(m), expected_odd[m]) << m;
}

TEST(WelchOptions, ValidateNamesTheFieldAndItsValue) {
  struct Bad {
    std::string expect;
    WelchOptions options;
  };
  std::vector<Bad> cases;
  auto add = [&](std::string expect, auto tweak) {
    WelchOptions o = Base();
    tweak(o);
    cases.push_back({std::move(expect), o});
  };
  add("sample_rate_hz 0", [](WelchOptions& o) { o.sample_rate_hz = 0.0; });
  add("sample_rate_hz -5", [](WelchOptions& o) { o.sample_rate_hz = -5.0; });
  add("sample_rate_hz nan", [](WelchOptions& o) { o.sample_rate_hz = NAN; });
  add("sample_rate_hz inf", [](WelchOptions& o) { o.sample_rate_hz = INFINITY; });
  add("segment_length 1", [](WelchOptions& o) {
    o.segment_length = 1;
    o.overlap = 0;
  });
  add("overlap 128 must be less than segment_length 128", [](WelchOptions& o) { o.overlap = 128; });
  add("fft_length 100", [](WelchOptions& o) { o.fft_length = 100; });
  add("window.kaiser_beta -1", [](WelchOptions& o) {
    o.window.kind = WindowKind::kKaiser;
    o.window.kaiser_beta = -1.0;
  });
  add("exponential_time_constant_s 0", [](WelchOptions& o) {
    o.averaging = Averaging::kExponential;
    o.exponential_time_constant_s = 0.0;
  });
  add("segments_per_average 1000000000", [](WelchOptions& o) {
    o.averaging = Averaging::kMedian;
    o.segments_per_average = 1000000000;
  });
  for (const Bad& bad : cases) {
    const Status status = bad.options.Validate();
    ASSERT_FALSE(status.ok()) << bad.expect;
    EXPECT_NE(status.message().find(bad.expect), std::string::npos)
        << "'" << status.message() << "' lacks '" << bad.expect << "'";
    Result<StreamingWelch> welch = StreamingWelch::Create(bad.options);
    ASSERT_FALSE(welch.ok());
    EXPECT_EQ(welch.message(), status.message());
  }
  EXPECT_TRUE(Base().Validate().ok());
}

TEST(WelchOptions, OverlapFromPercentRoundsToWholeSamples) {
  EXPECT_EQ(*OverlapFromPercent(4096, 50.0), 2048u);
  EXPECT_EQ(*OverlapFromPercent(1000, 66.67), 667u);
  EXPECT_EQ(*OverlapFromPercent(1000, 0.0), 0u);
  EXPECT_NE(OverlapFromPercent(1000, 100.0).message().find("100"), std::string::npos);
  EXPECT_FALSE(OverlapFromPercent(1000, -1.0).ok());
  EXPECT_NE(OverlapFromPercent(4096, 99.99).message().find("rounds to 4096"), std::string::npos);
}

TEST(WelchOptions, ParsesOptionNames) {
  EXPECT_EQ(*ParseDetrend("constant"), Detrend::kMean);
  EXPECT_EQ(*ParseDetrend("linear"), Detrend::kLinear);
  EXPECT_EQ(*ParseScaling("spectrum"), Scaling::kSpectrum);
  EXPECT_EQ(*ParseSides("twosided"), Sides::kTwoSided);
  EXPECT_EQ(*ParseAveraging("peak"), Averaging::kPeakHold);
  for (Averaging a :
       {Averaging::kMean, Averaging::kMedian, Averaging::kExponential, Averaging::kPeakHold}) {
    EXPECT_EQ(*ParseAveraging(ToString(a)), a);
  }
  EXPECT_NE(ParseDetrend("quadratic").message().find("'quadratic'"), std::string::npos);
  EXPECT_NE(ParseAveraging("max").message().find("'max'"), std::string::npos);
}

TEST(FftPlanCache, OnePlanPerLengthSharedAcrossThreads) {
  FftPlanCache cache;
  const std::vector<double> x = VibrationLikeSignal(6000, 1000.0, 2);
  WelchOptions options = Base();
  options.fft_length = 300;
  Result<StreamingWelch> serial = StreamingWelch::Create(options, &cache);
  ASSERT_TRUE(serial.ok());
  ASSERT_TRUE(serial->Push(x).ok());
  const AveragedSpectrum expected = serial->TakeAverage();

  std::vector<AveragedSpectrum> results(4);
  std::vector<std::thread> threads;
  for (std::size_t t = 0; t < results.size(); ++t) {
    threads.emplace_back([&, t] {
      Result<StreamingWelch> welch = StreamingWelch::Create(options, &cache);
      if (!welch.ok() || !welch->Push(x).ok()) return;
      results[t] = welch->TakeAverage();
      (void)cache.Get(64 + t % 2);  // two further lengths, asked for concurrently
    });
  }
  for (std::thread& thread : threads) thread.join();
  for (const AveragedSpectrum& result : results) EXPECT_EQ(result.values, expected.values);
  EXPECT_EQ(cache.size(), 3u);  // 300, 64, 65
  EXPECT_EQ(cache.Get(300).get(), cache.Get(300).get());
}

}  // namespace
}  // namespace spinward::estimators
