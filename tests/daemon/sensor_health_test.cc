// Sensor checks over real indicator values (computed with the estimators' accumulator from
// synthetic signals). Facts used: a sine over whole periods has mean 0 and RMS A / sqrt(2); a sine
// of amplitude A clipped at level L < A spends a fraction 1 - (2 / pi) asin(L / A) of its time at
// the rails (arcsine law of a sine's value, textbook). Thresholds are our configuration.
#include "spinward/daemon/sensor_health.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <numbers>
#include <random>
#include <vector>

#include "spinward/estimators/overall_indicators.h"

namespace spinward::daemon {
namespace {

constexpr std::size_t kSamples = 25600;  // one second at 25.6 kHz
constexpr double kFs = 25600.0;

std::vector<double> Sine(double amplitude, double offset = 0.0, double hz = 100.0) {
  std::vector<double> x(kSamples);
  for (std::size_t n = 0; n < kSamples; ++n) {
    x[n] =
        offset + amplitude * std::sin(2.0 * std::numbers::pi * hz * static_cast<double>(n) / kFs);
  }
  return x;
}

estimators::OverallIndicators Indicators(const std::vector<double>& x) {
  estimators::IndicatorAccumulator accumulator;
  accumulator.Add(x);
  return accumulator.Current();
}

TEST(SensorHealth, HealthySineRaisesNothing) {
  SensorHealthOptions options;
  options.full_scale = 50.0;  // m/s^2
  options.noise_floor_rms = 0.01;
  options.mean_window = ValueWindow{-0.5, 0.5};
  ASSERT_TRUE(options.Validate().ok());
  SensorHealthVerdict verdict = CheckSensorHealth(options, Indicators(Sine(10.0)), {});
  EXPECT_TRUE(verdict.ok()) << verdict.Reason();
  EXPECT_TRUE(verdict.Reason().empty());
}

TEST(SensorHealth, ConstantSignalIsAFlatline) {
  SensorHealthVerdict verdict =
      CheckSensorHealth({}, Indicators(std::vector<double>(kSamples, 0.25)), {});
  ASSERT_FALSE(verdict.ok());
  EXPECT_TRUE(verdict.Has(SensorCheck::kFlatline));
  EXPECT_NE(verdict.Reason().find("all 25600 samples equal 0.25"), std::string::npos)
      << verdict.Reason();
}

TEST(SensorHealth, NoiseAtTheFloorIsAFlatline) {
  // Gaussian channel noise of 0.002 RMS with the floor set at 0.005 RMS: the sensor says nothing.
  std::mt19937 rng(7);
  std::normal_distribution<double> noise(0.0, 0.002);
  std::vector<double> x(kSamples);
  for (double& v : x) v = noise(rng);
  SensorHealthOptions options;
  options.noise_floor_rms = 0.005;
  SensorHealthVerdict verdict = CheckSensorHealth(options, Indicators(x), {});
  EXPECT_TRUE(verdict.Has(SensorCheck::kFlatline)) << verdict.Reason();
  // Vibration well above the floor passes.
  EXPECT_TRUE(CheckSensorHealth(options, Indicators(Sine(0.5)), {}).ok());
}

TEST(SensorHealth, LongRunOfIdenticalSamplesIsAFlatline) {
  SensorHealthOptions options;  // limit 100 in a row
  SensorCounters counters;
  counters.longest_identical_run = 99;
  EXPECT_TRUE(CheckSensorHealth(options, Indicators(Sine(1.0)), counters).ok());
  counters.longest_identical_run = 100;
  SensorHealthVerdict verdict = CheckSensorHealth(options, Indicators(Sine(1.0)), counters);
  EXPECT_TRUE(verdict.Has(SensorCheck::kFlatline));
  EXPECT_NE(verdict.Reason().find("100 identical samples in a row"), std::string::npos);
}

TEST(SensorHealth, ClippedSineIsFlaggedByCountAndByReachingTheRail) {
  SensorHealthOptions options;
  options.full_scale = 10.0;
  options.clip_margin = 0.0;
  options.clip_fraction_limit = 0.1;
  options.clip_count_limit = kSamples;  // leave the decision to the fraction
  // 97.3 Hz is not commensurate with the sample rate, so the samples sweep the sine's phase and
  // the sampled fraction approaches the continuous one.
  std::vector<double> x = Sine(12.0, 0.0, 97.3);
  for (double& v : x) v = std::clamp(v, -10.0, 10.0);

  SensorCounters counters;
  counters.clipped_samples = static_cast<std::size_t>(std::count_if(
      x.begin(), x.end(), [&](double v) { return std::fabs(v) >= options.ClipLevel(); }));
  // Arcsine law: 1 - (2 / pi) asin(10 / 12) = 0.3729 of the samples sit on the rails.
  const double expected = 1.0 - 2.0 / std::numbers::pi * std::asin(10.0 / 12.0);
  EXPECT_NEAR(static_cast<double>(*counters.clipped_samples) / kSamples, expected, 0.002);

  SensorHealthVerdict counted = CheckSensorHealth(options, Indicators(x), counters);
  EXPECT_TRUE(counted.Has(SensorCheck::kClipping)) << counted.Reason();
  // Without the pipeline's count, reaching full scale is the evidence.
  SensorHealthVerdict uncounted = CheckSensorHealth(options, Indicators(x), {});
  EXPECT_TRUE(uncounted.Has(SensorCheck::kClipping)) << uncounted.Reason();
  // A sine at 90 % of full scale never reaches the rails.
  EXPECT_TRUE(CheckSensorHealth(options, Indicators(Sine(9.0)), {}).ok());
}

TEST(SensorHealth, ClipCountBelowTheLimitPasses) {
  SensorHealthOptions options;
  options.full_scale = 10.0;  // default: 3 clipped samples fault
  SensorCounters counters;
  counters.clipped_samples = 2;
  EXPECT_TRUE(CheckSensorHealth(options, Indicators(Sine(5.0)), counters).ok());
  counters.clipped_samples = 3;
  SensorHealthVerdict verdict = CheckSensorHealth(options, Indicators(Sine(5.0)), counters);
  EXPECT_TRUE(verdict.Has(SensorCheck::kClipping));
  EXPECT_NE(verdict.Reason().find("3 of 25600 samples at full scale 10"), std::string::npos)
      << verdict.Reason();
}

TEST(SensorHealth, BiasOutsideItsWindow) {
  // IEPE accelerometers sit at a bias of roughly 8-14 V; a shorted cable reads near 0 V, an open
  // one near the supply (from memory, typical data-sheet values).
  SensorHealthOptions options;
  options.bias_volts_window = ValueWindow{8.0, 14.0};
  SensorCounters counters;
  counters.bias_volts = 11.2;
  EXPECT_TRUE(CheckSensorHealth(options, Indicators(Sine(1.0)), counters).ok());
  counters.bias_volts = 0.4;
  SensorHealthVerdict shorted = CheckSensorHealth(options, Indicators(Sine(1.0)), counters);
  EXPECT_TRUE(shorted.Has(SensorCheck::kBias));
  EXPECT_NE(shorted.Reason().find("bias 0.4 V outside 8..14 V"), std::string::npos);
  counters.bias_volts = 23.8;
  EXPECT_TRUE(CheckSensorHealth(options, Indicators(Sine(1.0)), counters).Has(SensorCheck::kBias));

  // Mean in engineering units on a DC-coupled channel: a whole-period sine riding on 3.0 has
  // mean 3.
  SensorHealthOptions mean_options;
  mean_options.mean_window = ValueWindow{-0.5, 0.5};
  SensorHealthVerdict offset = CheckSensorHealth(mean_options, Indicators(Sine(1.0, 3.0)), {});
  EXPECT_TRUE(offset.Has(SensorCheck::kBias));
  EXPECT_NE(offset.Reason().find("mean 3 outside"), std::string::npos) << offset.Reason();
  EXPECT_TRUE(CheckSensorHealth(mean_options, Indicators(Sine(1.0, 0.2)), {}).ok());
}

TEST(SensorHealth, DropoutsFromTheCounters) {
  SensorHealthOptions options;  // any gap, or more than 2 missing intervals
  SensorCounters counters;
  counters.missing_intervals = 2;
  EXPECT_TRUE(CheckSensorHealth(options, Indicators(Sine(1.0)), counters).ok());
  counters.missing_intervals = 3;
  EXPECT_TRUE(
      CheckSensorHealth(options, Indicators(Sine(1.0)), counters).Has(SensorCheck::kDropout));
  counters.missing_intervals = 0;
  counters.sequence_gaps = 1;
  SensorHealthVerdict gap = CheckSensorHealth(options, Indicators(Sine(1.0)), counters);
  EXPECT_TRUE(gap.Has(SensorCheck::kDropout));
  EXPECT_NE(gap.Reason().find("1 sequence gap(s)"), std::string::npos);
  SensorHealthVerdict empty = CheckSensorHealth(options, estimators::OverallIndicators{}, {});
  EXPECT_TRUE(empty.Has(SensorCheck::kDropout));
  EXPECT_NE(empty.Reason().find("no samples"), std::string::npos);
}

TEST(SensorHealth, SeveralFindingsAreAllReported) {
  SensorHealthOptions options;
  options.full_scale = 1.0;
  options.mean_window = ValueWindow{-0.1, 0.1};
  SensorCounters counters;
  counters.sequence_gaps = 4;
  // Railed at full scale: constant, clipped and offset at once.
  SensorHealthVerdict verdict =
      CheckSensorHealth(options, Indicators(std::vector<double>(kSamples, 1.0)), counters);
  EXPECT_TRUE(verdict.Has(SensorCheck::kFlatline));
  EXPECT_TRUE(verdict.Has(SensorCheck::kClipping));
  EXPECT_TRUE(verdict.Has(SensorCheck::kBias));
  EXPECT_TRUE(verdict.Has(SensorCheck::kDropout));
  EXPECT_EQ(verdict.findings.size(), 4u);

  storage::MeasurementRecord record;
  FlagRecord(verdict, record);
  EXPECT_TRUE(record.sensor_fault);
  EXPECT_EQ(record.sensor_fault_reason, verdict.Reason());
  FlagRecord(SensorHealthVerdict{}, record);
  EXPECT_FALSE(record.sensor_fault);
  EXPECT_TRUE(record.sensor_fault_reason.empty());
}

TEST(SensorHealth, OptionsValidateNamesTheField) {
  SensorHealthOptions options;
  options.full_scale = -2.0;
  Status status = options.Validate();
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.message().find("full_scale must be positive, got -2"), std::string::npos);

  options = {};
  options.bias_volts_window = ValueWindow{14.0, 8.0};
  status = options.Validate();
  ASSERT_FALSE(status.ok());
  EXPECT_NE(status.message().find("bias_volts_window low (14)"), std::string::npos);

  options = {};
  options.clip_fraction_limit = 1.5;
  EXPECT_FALSE(options.Validate().ok());
  options = {};
  options.identical_run_limit = 1;
  EXPECT_FALSE(options.Validate().ok());
}

}  // namespace
}  // namespace spinward::daemon
