// Cost of the machine-aware measures per averaging interval, next to the interval's own Welch
// average: one 1.92 s interval at 25.6 kHz (49152 samples, 12 segments of 4096 without overlap),
// an invented Larkfield P-101 signal (shaft lines and Gaussian noise, fixed seed).
//   welch/interval        the interval's Welch average (what every point already pays)
//   envelope/interval     band-pass 2-4 kHz, squared envelope, Welch of 8192, BPFO line search
//   kurtogram/interval    the kurtogram's band choice (levels to 32 bands, bands >= 800 Hz), paid
//                         once per pipeline when no band is configured
// Read the ratios to welch/interval, not the absolute times.
#include <benchmark/benchmark.h>

#include <cmath>
#include <numbers>
#include <random>
#include <vector>

#include "spinward/estimators/envelope_spectrum.h"
#include "spinward/estimators/kurtogram.h"
#include "spinward/estimators/streaming_welch.h"

namespace {

namespace est = spinward::estimators;
constexpr double kFs = 25600.0;
constexpr std::size_t kN = 49152;

const std::vector<double>& Signal() {
  static const std::vector<double> x = [] {
    std::mt19937 rng(20261202);
    std::normal_distribution<double> noise(0.0, 0.5);
    std::vector<double> v(kN);
    for (std::size_t i = 0; i < kN; ++i) {
      const double t = static_cast<double>(i) / kFs;
      v[i] = noise(rng) + std::sin(2.0 * std::numbers::pi * 24.8 * t);
    }
    return v;
  }();
  return x;
}

void WelchInterval(benchmark::State& state) {
  est::WelchOptions options;
  options.sample_rate_hz = kFs;
  options.segment_length = 4096;
  options.overlap = 0;
  for (auto _ : state) {
    auto spectrum = est::Welch(Signal(), options);
    benchmark::DoNotOptimize(spectrum);
  }
}
BENCHMARK(WelchInterval)->Name("welch/interval")->Unit(benchmark::kMillisecond);

void EnvelopeInterval(benchmark::State& state) {
  est::EnvelopeOptions options;
  options.sample_rate_hz = kFs;
  options.band_low_hz = 2000.0;
  options.band_high_hz = 4000.0;
  est::LineSearch search;
  search.frequency_hz = 88.9;
  search.background_max_hz = 600.0;
  for (auto _ : state) {
    auto spectrum = est::EnvelopeSpectrum(Signal(), options);
    auto lines = est::FindHarmonicLines(*spectrum, search);
    benchmark::DoNotOptimize(lines);
  }
}
BENCHMARK(EnvelopeInterval)->Name("envelope/interval")->Unit(benchmark::kMillisecond);

void KurtogramInterval(benchmark::State& state) {
  for (auto _ : state) {
    auto k = est::ComputeKurtogram(Signal(), kFs, 5, 800.0);
    benchmark::DoNotOptimize(k);
  }
}
BENCHMARK(KurtogramInterval)->Name("kurtogram/interval")->Unit(benchmark::kMillisecond);

}  // namespace

BENCHMARK_MAIN();
