// Streaming Welch throughput next to a bare FFTW loop over the same segments, and the per-sample
// cost of the time-domain indicators, all on one signal.
//
// The signal is one minute of an invented P-101 booster pump (Larkfield water utility) at 25.6 kHz:
// 1x/2x running speed, vane pass, a bearing tone and Gaussian noise over a small DC offset, made
// from a fixed seed, so every run and SciPy (bench/run_welch_benchmark.py) see the same samples.
// The estimator settings are those of docs/performance.md: segment 4096, 50 % overlap, periodic
// Hann, mean detrend, one-sided density, mean averaging.
//
// What each benchmark is for:
//   spinward/frames_2560  the daemon's case: 2560-sample frames (0.1 s) pushed one by one
//   spinward/one_block    the whole minute in one Push
//   floor/window_r2c      window multiply into an aligned buffer + r2c per segment, nothing else
//   floor/copy_r2c        segment copied into the aligned buffer + r2c: no window, no detrend
//   floor/r2c             r2c of each segment read in place where it lies in the signal
// The last two are the floor no Welch can beat; which of them is lower depends on the cache (the
// in-place transform reads a segment with FFTW's strides straight from a 12 MB signal).
//   indicators/frames_2560  IndicatorAccumulator::Add over the same frames
// The floor plans exactly as estimators/src/fft_plan_cache.cc does (fftw_plan_dft_r2c_1d,
// FFTW_ESTIMATE, fftw_malloc'd arrays, executed with fftw_execute_dft_r2c on new arrays).
//
// Extra flags (before or after Google Benchmark's own):
//   --write_signal=PATH  write the signal as little-endian float64 and exit
//   --write_psd=PATH     write Spinward's averaged PSD (float64) of the signal and exit
#include <benchmark/benchmark.h>
#include <fftw3.h>

#include <cmath>
#include <cstddef>
#include <cstdio>
#include <cstring>
#include <numbers>
#include <random>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/overall_indicators.h"
#include "spinward/estimators/streaming_welch.h"

namespace {

namespace est = spinward::estimators;

constexpr double kSampleRateHz = 25600.0;
constexpr std::size_t kSampleCount = 1536000;  // 60 s
constexpr std::size_t kSegment = 4096;
constexpr std::size_t kOverlap = 2048;
constexpr std::size_t kHop = kSegment - kOverlap;
constexpr std::size_t kFrame = 2560;  // 0.1 s, a typical acquisition frame
constexpr std::size_t kSegments = (kSampleCount - kOverlap) / kHop;  // 749

// fftw_malloc'd doubles: the same alignment the estimator's buffers have.
struct FftwDoubles {
  explicit FftwDoubles(std::size_t n) : data(fftw_alloc_real(n)), size(n) {}
  ~FftwDoubles() { fftw_free(data); }
  FftwDoubles(const FftwDoubles&) = delete;
  FftwDoubles& operator=(const FftwDoubles&) = delete;
  double* data;
  std::size_t size;
  std::span<const double> span() const { return {data, size}; }
};

// P-101 at 1770 rpm (29.5 Hz): amplitudes in m/s^2, made up to look like a healthy pump.
void FillPumpSignal(double* x) {
  const double run_hz = 29.5;
  struct Tone {
    double hz, amplitude, phase;
  };
  const Tone tones[] = {{run_hz, 0.8, 0.3},
                        {2.0 * run_hz, 0.35, 1.1},
                        {6.0 * run_hz, 0.5, 2.0},     // vane pass, 6-vane impeller
                        {3.58 * run_hz, 0.05, 0.7}};  // an outer-race tone, just visible
  std::mt19937_64 rng(20260101);
  std::normal_distribution<double> noise(0.0, 0.2);
  const double dt = 1.0 / kSampleRateHz;
  for (std::size_t n = 0; n < kSampleCount; ++n) {
    const double t = static_cast<double>(n) * dt;
    double v = 0.02;  // sensor bias
    for (const Tone& tone : tones) {
      v += tone.amplitude * std::sin(2.0 * std::numbers::pi * tone.hz * t + tone.phase);
    }
    x[n] = v + noise(rng);
  }
}

est::WelchOptions BenchOptions() {
  est::WelchOptions o;
  o.sample_rate_hz = kSampleRateHz;
  o.segment_length = kSegment;
  o.overlap = kOverlap;
  o.window.kind = est::WindowKind::kHann;
  o.detrend = est::Detrend::kMean;
  o.scaling = est::Scaling::kDensity;
  o.sides = est::Sides::kOneSided;
  o.averaging = est::Averaging::kMean;
  return o;
}

void SetCounts(benchmark::State& state) {
  state.SetItemsProcessed(state.iterations() * static_cast<std::int64_t>(kSampleCount));
  state.counters["segments"] = static_cast<double>(kSegments);
}

void SpinwardWelch(benchmark::State& state, std::span<const double> x, std::size_t block) {
  auto welch = est::StreamingWelch::Create(BenchOptions());
  if (!welch.ok()) {
    state.SkipWithError(welch.message().c_str());
    return;
  }
  for (auto _ : state) {
    for (std::size_t at = 0; at < x.size(); at += block) {
      const std::size_t n = std::min(block, x.size() - at);
      if (!welch->Push(x.subspan(at, n)).ok()) state.SkipWithError("Push failed");
    }
    est::AveragedSpectrum average = welch->TakeAverage();
    welch->Reset();  // the next pass starts a fresh stream, not a continuation
    benchmark::DoNotOptimize(average.values.data());
    if (average.segment_count != kSegments) state.SkipWithError("unexpected segment count");
  }
  SetCounts(state);
}

struct FloorPlan {
  FloorPlan() : in(kSegment), out(fftw_alloc_complex(kSegment / 2 + 1)) {
    plan = fftw_plan_dft_r2c_1d(static_cast<int>(kSegment), in.data, out, FFTW_ESTIMATE);
  }
  ~FloorPlan() {
    fftw_destroy_plan(plan);
    fftw_free(out);
  }
  FloorPlan(const FloorPlan&) = delete;
  FloorPlan& operator=(const FloorPlan&) = delete;
  FftwDoubles in;
  fftw_complex* out;
  fftw_plan plan;
};

void FloorWindowR2c(benchmark::State& state, std::span<const double> x) {
  FloorPlan p;
  std::vector<double> w(kSegment);  // periodic Hann, as scipy.signal.get_window('hann', L)
  for (std::size_t n = 0; n < kSegment; ++n) {
    w[n] = 0.5 - 0.5 * std::cos(2.0 * std::numbers::pi * static_cast<double>(n) / kSegment);
  }
  for (auto _ : state) {
    for (std::size_t k = 0; k < kSegments; ++k) {
      const double* seg = x.data() + k * kHop;
      for (std::size_t n = 0; n < kSegment; ++n) p.in.data[n] = seg[n] * w[n];
      fftw_execute_dft_r2c(p.plan, p.in.data, p.out);
    }
    benchmark::DoNotOptimize(p.out[1][0]);
  }
  SetCounts(state);
}

void FloorCopyR2c(benchmark::State& state, std::span<const double> x) {
  FloorPlan p;
  for (auto _ : state) {
    for (std::size_t k = 0; k < kSegments; ++k) {
      std::memcpy(p.in.data, x.data() + k * kHop, kSegment * sizeof(double));
      fftw_execute_dft_r2c(p.plan, p.in.data, p.out);
    }
    benchmark::DoNotOptimize(p.out[1][0]);
  }
  SetCounts(state);
}

void FloorR2c(benchmark::State& state, std::span<const double> x) {
  FloorPlan p;
  // Out-of-place r2c keeps its input (FFTW's default), so each segment is transformed where it
  // lies. The segments start kHop doubles apart in an fftw_malloc'd array, so they share the
  // planning arrays' alignment, which fftw_execute_dft_r2c on new arrays requires.
  if (fftw_alignment_of(const_cast<double*>(x.data() + kHop)) != fftw_alignment_of(p.in.data)) {
    state.SkipWithError("segments are not aligned like the planning array");
    return;
  }
  for (auto _ : state) {
    for (std::size_t k = 0; k < kSegments; ++k) {
      fftw_execute_dft_r2c(p.plan, const_cast<double*>(x.data() + k * kHop), p.out);
    }
    benchmark::DoNotOptimize(p.out[1][0]);
  }
  SetCounts(state);
}

void Indicators(benchmark::State& state, std::span<const double> x) {
  est::IndicatorAccumulator acc;
  for (auto _ : state) {
    for (std::size_t at = 0; at < x.size(); at += kFrame) {
      if (!acc.Add(x.subspan(at, std::min(kFrame, x.size() - at)))) {
        state.SkipWithError("Add rejected a block");
      }
    }
    est::OverallIndicators v = acc.Current();
    benchmark::DoNotOptimize(v);
    acc.Reset();
  }
  state.SetItemsProcessed(state.iterations() * static_cast<std::int64_t>(kSampleCount));
}

bool WriteDoubles(const std::string& path, std::span<const double> values) {
  std::FILE* f = std::fopen(path.c_str(), "wb");
  if (f == nullptr) return false;
  const std::size_t written = std::fwrite(values.data(), sizeof(double), values.size(), f);
  return std::fclose(f) == 0 && written == values.size();
}

// Removes --name=VALUE from argv and returns VALUE (empty when absent).
std::string TakeFlag(int& argc, char** argv, std::string_view name) {
  const std::string prefix = "--" + std::string(name) + "=";
  std::string value;
  int kept = 0;
  for (int i = 0; i < argc; ++i) {
    std::string_view arg(argv[i]);
    if (i > 0 && arg.starts_with(prefix)) {
      value = std::string(arg.substr(prefix.size()));
    } else {
      argv[kept++] = argv[i];
    }
  }
  argc = kept;
  return value;
}

}  // namespace

int main(int argc, char** argv) {
  const std::string signal_path = TakeFlag(argc, argv, "write_signal");
  const std::string psd_path = TakeFlag(argc, argv, "write_psd");

  FftwDoubles signal(kSampleCount);
  FillPumpSignal(signal.data);

  if (!signal_path.empty()) {
    if (!WriteDoubles(signal_path, signal.span())) {
      std::fprintf(stderr, "welch_bench: cannot write the signal to %s\n", signal_path.c_str());
      return 1;
    }
    return 0;
  }
  if (!psd_path.empty()) {
    auto psd = est::Welch(signal.span(), BenchOptions());
    if (!psd.ok() || !WriteDoubles(psd_path, psd->values)) {
      std::fprintf(stderr, "welch_bench: cannot compute or write the PSD to %s: %s\n",
                   psd_path.c_str(), psd.message().c_str());
      return 1;
    }
    return 0;
  }

  const std::span<const double> x = signal.span();
  benchmark::RegisterBenchmark("spinward/frames_2560",
                               [x](benchmark::State& s) { SpinwardWelch(s, x, kFrame); });
  benchmark::RegisterBenchmark("spinward/one_block",
                               [x](benchmark::State& s) { SpinwardWelch(s, x, kSampleCount); });
  benchmark::RegisterBenchmark("floor/window_r2c",
                               [x](benchmark::State& s) { FloorWindowR2c(s, x); });
  benchmark::RegisterBenchmark("floor/copy_r2c", [x](benchmark::State& s) { FloorCopyR2c(s, x); });
  benchmark::RegisterBenchmark("floor/r2c", [x](benchmark::State& s) { FloorR2c(s, x); });
  benchmark::RegisterBenchmark("indicators/frames_2560",
                               [x](benchmark::State& s) { Indicators(s, x); });
  benchmark::AddCustomContext("fftw", fftw_version);
  benchmark::AddCustomContext("samples", std::to_string(kSampleCount));

  benchmark::Initialize(&argc, argv);
  if (benchmark::ReportUnrecognizedArguments(argc, argv)) return 1;
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  return 0;
}
