// Streaming Welch, segment for segment the estimate scipy.signal.welch (SciPy 1.10) makes.
//
// Overlap buffer. Consecutive segments start H = L - D samples apart. Between blocks we hold only
// the samples from the next segment's start onwards (always fewer than L). A block is processed
// against that held tail without first joining the two: a segment that begins in the held samples
// is read from the held tail and the head of the block, one that lies wholly inside the block is
// read straight from the block. Each segment is read twice (once for the detrend sums, once to
// write detrended, windowed samples into the FFT input) and written once; no sample is copied per
// segment. After the block, the new tail (< L samples) is appended to the held buffer, which has
// room for 2L: its start just advances, and it is compacted (a move of < L samples) only when its
// end would run past 2L, at most once per L samples received. So the cost per input sample is O(1)
// copies, independent of the overlap, and blocks of 1 sample or of many segments give the same
// segments and so the same averages as one batch call over the concatenated stream.
//
// Scaling, doubling and averaging follow SciPy's order: |X|^2 x scale, x 2 on the one-sided bins
// that have a mirror image (1..M/2-1 for even M, 1..(M-1)/2 for odd M), then the average per bin.
// Internally only the M/2 + 1 bins of the real FFT are kept; a two-sided result is mirrored out
// (|X[M-m]| = |X[m]| for real input) when an average is read.
#include "spinward/estimators/streaming_welch.h"

#include <algorithm>
#include <bit>
#include <cmath>
#include <complex>
#include <cstdint>
#include <cstring>
#include <limits>
#include <string>
#include <utility>

#include "number_text.h"
#include "spinward/estimators/fft_plan_cache.h"
#include "spinward/estimators/finite_check.h"

namespace spinward::estimators {
namespace {

// Bounds that keep a configuration from asking for absurd memory (2^24 samples is 4.6 minutes at
// 60 kHz in one segment; 2^27 stored values is 1 GiB for median averaging).
constexpr std::size_t kMaxLength = std::size_t{1} << 24;
constexpr std::size_t kMaxMedianValues = std::size_t{1} << 27;

std::string SizeText(std::size_t value) { return std::to_string(value); }

// The bias of the median of K chi-square (2 degrees of freedom) variables relative to their mean,
// as scipy.signal._spectral_py._median_bias: 1 + sum_{i=1}^{floor((K-1)/2)} 1/(2i+1) - 1/(2i).
double MedianBias(std::size_t k) {
  double bias = 1.0;
  for (std::size_t i = 1; k >= 1 && i <= (k - 1) / 2; ++i) {
    const double even = 2.0 * static_cast<double>(i);
    bias += 1.0 / (even + 1.0) - 1.0 / even;
  }
  return bias;
}

// Calls f(n, x) for the samples of a then b, numbered from 0.
template <typename F>
void ForEachSample(std::span<const double> a, std::span<const double> b, F&& f) {
  std::size_t n = 0;
  for (double x : a) f(n++, x);
  for (double x : b) f(n++, x);
}

// The sum of the samples of a then b. One running sum is a chain of dependent adds (a few cycles
// each, and the compiler may not reorder floating-point adds), which cost more than the rest of the
// detrend and window together; kSumLanes partial sums, sample n going to lane n % kSumLanes, run in
// parallel and vectorize. Each lane adds its samples in index order whatever the split between a
// and b, so a segment's sum, and so the streaming result, is bit-identical for any block
// boundaries.
constexpr std::size_t kSumLanes = 8;
double SegmentSum(std::span<const double> a, std::span<const double> b) {
  double lane[kSumLanes] = {};
  std::size_t n = 0;  // segment index of the part's first sample
  for (std::span<const double> part : {a, b}) {
    const double* p = part.data();
    const std::size_t count = part.size();
    std::size_t i = 0;
    for (; i < count && (n + i) % kSumLanes != 0; ++i) lane[(n + i) % kSumLanes] += p[i];
    for (; i + kSumLanes <= count; i += kSumLanes) {
      for (std::size_t j = 0; j < kSumLanes; ++j) lane[j] += p[i + j];
    }
    for (; i < count; ++i) lane[(n + i) % kSumLanes] += p[i];
    n += count;
  }
  return ((lane[0] + lane[1]) + (lane[2] + lane[3])) + ((lane[4] + lane[5]) + (lane[6] + lane[7]));
}

}  // namespace

Status WelchOptions::Validate() const {
  if (!(std::isfinite(sample_rate_hz) && sample_rate_hz > 0.0)) {
    return Error{"sample_rate_hz " + NumberText(sample_rate_hz) + " must be positive and finite"};
  }
  if (segment_length < 2) {
    return Error{"segment_length " + SizeText(segment_length) + " must be at least 2"};
  }
  if (segment_length > kMaxLength) {
    return Error{"segment_length " + SizeText(segment_length) + " exceeds the largest supported " +
                 SizeText(kMaxLength)};
  }
  if (overlap >= segment_length) {
    return Error{"overlap " + SizeText(overlap) + " must be less than segment_length " +
                 SizeText(segment_length)};
  }
  if (fft_length != 0 && fft_length < segment_length) {
    return Error{"fft_length " + SizeText(fft_length) +
                 " must be 0 (the segment length) or at least segment_length " +
                 SizeText(segment_length)};
  }
  if (fft_length > kMaxLength) {
    return Error{"fft_length " + SizeText(fft_length) + " exceeds the largest supported " +
                 SizeText(kMaxLength)};
  }
  if (static_cast<int>(window.kind) < static_cast<int>(WindowKind::kRectangular) ||
      static_cast<int>(window.kind) > static_cast<int>(WindowKind::kKaiser)) {
    return Error{"window.kind " + std::to_string(static_cast<int>(window.kind)) + " is unknown"};
  }
  if (window.kind == WindowKind::kKaiser &&
      !(std::isfinite(window.kaiser_beta) && window.kaiser_beta >= 0.0 &&
        window.kaiser_beta <= 700.0)) {
    return Error{"window.kaiser_beta " + NumberText(window.kaiser_beta) +
                 " must be finite and between 0 and 700"};
  }
  if (averaging == Averaging::kExponential &&
      !(std::isfinite(exponential_time_constant_s) && exponential_time_constant_s > 0.0)) {
    return Error{"exponential_time_constant_s " + NumberText(exponential_time_constant_s) +
                 " must be positive and finite"};
  }
  if (averaging == Averaging::kMedian && segments_per_average > 0 &&
      segments_per_average > kMaxMedianValues / BinCount()) {
    return Error{"segments_per_average " + SizeText(segments_per_average) +
                 " with median averaging would keep more than " + SizeText(kMaxMedianValues) +
                 " spectrum values (" + SizeText(BinCount()) + " bins per segment)"};
  }
  return Status::Ok();
}

std::size_t WelchOptions::BinCount() const {
  const std::size_t m = EffectiveFftLength();
  return sides == Sides::kOneSided ? m / 2 + 1 : m;
}

Result<std::size_t> OverlapFromPercent(std::size_t segment_length, double percent) {
  if (!(std::isfinite(percent) && percent >= 0.0 && percent < 100.0)) {
    return Error{"overlap percent " + NumberText(percent) + " must be at least 0 and below 100"};
  }
  const double samples = std::round(static_cast<double>(segment_length) * percent / 100.0);
  const auto overlap = static_cast<std::size_t>(samples);
  if (overlap >= segment_length) {
    return Error{"overlap percent " + NumberText(percent) + " of segment_length " +
                 SizeText(segment_length) + " rounds to " + SizeText(overlap) +
                 " samples, which must be less than the segment"};
  }
  return overlap;
}

double AveragedSpectrum::FrequencyHz(std::size_t bin) const {
  const double df = BinWidthHz();
  if (sides == Sides::kTwoSided && bin > (fft_length - 1) / 2) {
    // numpy.fft.fftfreq order: the upper half holds the negative frequencies.
    return -static_cast<double>(fft_length - bin) * df;
  }
  return static_cast<double>(bin) * df;
}

std::vector<double> AveragedSpectrum::FrequenciesHz() const {
  std::vector<double> f(values.size());
  for (std::size_t m = 0; m < f.size(); ++m) f[m] = FrequencyHz(m);
  return f;
}

struct StreamingWelch::State {
  State(const WelchOptions& o, Window w, std::shared_ptr<const RealFft> f)
      : options(o),
        window(std::move(w)),
        fft(std::move(f)),
        segment_length(o.segment_length),
        hop(o.Hop()),
        fft_length(o.EffectiveFftLength()),
        fft_bins(fft_length / 2 + 1),
        fft_in(fft_length * sizeof(double)),
        fft_out(fft_bins * sizeof(std::complex<double>)),
        held(2 * segment_length),
        accumulator(fft_bins, 0.0) {
    scale = o.scaling == Scaling::kDensity ? 1.0 / (o.sample_rate_hz * window.sum_of_squares())
                                           : 1.0 / (window.sum() * window.sum());
    exponential_weight =
        -std::expm1(-static_cast<double>(hop) / (o.sample_rate_hz * o.exponential_time_constant_s));
    std::fill_n(static_cast<double*>(fft_in.data()), fft_length, 0.0);
    if (o.averaging == Averaging::kMedian && o.segments_per_average > 0) {
      median_store.resize(o.segments_per_average * fft_bins);
      median_scratch.resize(o.segments_per_average);
    }
    report.values.reserve(o.BinCount());
    FillMetadata(report);
  }

  void FillMetadata(AveragedSpectrum& out) const {
    out.sample_rate_hz = options.sample_rate_hz;
    out.fft_length = fft_length;
    out.segment_length = segment_length;
    out.scaling = options.scaling;
    out.sides = options.sides;
    out.averaging = options.averaging;
    out.window = options.window;
  }

  // Segments the current value is made of: the interval's, or for exponential averaging every
  // segment since the running value was started.
  std::size_t SegmentsInValue() const {
    return options.averaging == Averaging::kExponential ? exponential_count : in_average;
  }

  // a then b hold exactly segment_length samples.
  void ProcessSegment(std::span<const double> a, std::span<const double> b) {
    const double* w = window.coefficients().data();
    double* in = static_cast<double*>(fft_in.data());
    switch (options.detrend) {
      case Detrend::kNone:
        ForEachSample(a, b, [&](std::size_t n, double x) { in[n] = x * w[n]; });
        break;
      case Detrend::kMean: {
        const double mean = SegmentSum(a, b) / static_cast<double>(segment_length);
        ForEachSample(a, b, [&](std::size_t n, double x) { in[n] = (x - mean) * w[n]; });
        break;
      }
      case Detrend::kLinear: {
        // Least-squares line against the index, centred at c = (L - 1) / 2 so that the intercept
        // is the mean and the slope is sum((n - c) x) / sum((n - c)^2), sum((n - c)^2) =
        // L(L^2-1)/12.
        const double length = static_cast<double>(segment_length);
        const double centre = (length - 1.0) / 2.0;
        double sum = 0.0;
        double sum_centred = 0.0;
        ForEachSample(a, b, [&](std::size_t n, double x) {
          sum += x;
          sum_centred += (static_cast<double>(n) - centre) * x;
        });
        const double mean = sum / length;
        const double slope = sum_centred / (length * (length * length - 1.0) / 12.0);
        ForEachSample(a, b, [&](std::size_t n, double x) {
          in[n] = (x - mean - slope * (static_cast<double>(n) - centre)) * w[n];
        });
        break;
      }
    }
    // The zero padding: FFTW's out-of-place r2c preserves its input, but clearing costs M - L
    // writes and guards against any transform that would not.
    std::fill(in + segment_length, in + fft_length, 0.0);
    auto* out = static_cast<std::complex<double>*>(fft_out.data());
    fft->Forward(in, out);
    Accumulate(out);
  }

  // Calls f(m, p) with bin m's scaled one- or two-sided power. One plain loop per run of bins (DC,
  // the doubled bins, the rest) instead of a test per bin, so the loops vectorize. |X|^2 x scale
  // and then x 2 (or x 1), as SciPy orders it.
  template <typename F>
  void ForEachPower(const std::complex<double>* out, F&& f) const {
    // std::complex<double> is an array of two doubles, re then im ([complex.numbers]/4).
    const double* z = reinterpret_cast<const double*>(out);
    const double s = scale;
    auto run = [&](std::size_t begin, std::size_t end, double factor) {
      for (std::size_t m = begin; m < end; ++m) {
        const double re = z[2 * m];
        const double im = z[2 * m + 1];
        f(m, (re * re + im * im) * s * factor);
      }
    };
    // Bins with a mirror image at negative frequency: 1..M/2-1 for even M, 1..(M-1)/2 for odd.
    const std::size_t doubled_end = options.sides == Sides::kTwoSided ? 1
                                    : fft_length % 2 == 0             ? fft_length / 2
                                                                      : (fft_length + 1) / 2;
    run(0, 1, 1.0);
    run(1, doubled_end, 2.0);
    run(doubled_end, fft_bins, 1.0);
  }

  void Accumulate(const std::complex<double>* out) {
    double* acc = accumulator.data();
    switch (options.averaging) {
      case Averaging::kMean:
        if (in_average == 0) {
          ForEachPower(out, [acc](std::size_t m, double p) { acc[m] = p; });
        } else {
          ForEachPower(out, [acc](std::size_t m, double p) { acc[m] += p; });
        }
        break;
      case Averaging::kMedian: {
        // With segments_per_average == 0 the store grows: the header documents this allocation.
        const std::size_t offset = in_average * fft_bins;
        if (median_store.size() < offset + fft_bins) median_store.resize(offset + fft_bins);
        double* row = median_store.data() + offset;
        ForEachPower(out, [row](std::size_t m, double p) { row[m] = p; });
        break;
      }
      case Averaging::kExponential:
        if (exponential_count == 0) {
          ForEachPower(out, [acc](std::size_t m, double p) { acc[m] = p; });
        } else {
          const double a = exponential_weight;
          ForEachPower(out, [acc, a](std::size_t m, double p) { acc[m] += a * (p - acc[m]); });
        }
        ++exponential_count;
        break;
      case Averaging::kPeakHold:
        if (in_average == 0) {
          ForEachPower(out, [acc](std::size_t m, double p) { acc[m] = p; });
        } else {
          ForEachPower(out, [acc](std::size_t m, double p) { acc[m] = std::max(acc[m], p); });
        }
        break;
    }
    ++in_average;
    ++total;
  }

  // Writes the current average into out.values (reusing its capacity); scratch holds one bin's
  // values across segments for the median.
  void FillAverage(AveragedSpectrum& out, std::vector<double>& scratch) const {
    FillMetadata(out);
    const std::size_t count = SegmentsInValue();
    out.segment_count = count;
    if (count == 0) {
      out.values.clear();
      return;
    }
    out.values.resize(options.BinCount());
    double* v = out.values.data();
    switch (options.averaging) {
      case Averaging::kMean: {
        const double k = static_cast<double>(count);
        for (std::size_t m = 0; m < fft_bins; ++m) v[m] = accumulator[m] / k;
        break;
      }
      case Averaging::kMedian: {
        if (scratch.size() < count) scratch.resize(count);
        const double bias = MedianBias(count);
        const std::size_t middle = count / 2;
        for (std::size_t m = 0; m < fft_bins; ++m) {
          for (std::size_t k = 0; k < count; ++k) scratch[k] = median_store[k * fft_bins + m];
          auto begin = scratch.begin();
          auto end = begin + static_cast<std::ptrdiff_t>(count);
          std::nth_element(begin, begin + static_cast<std::ptrdiff_t>(middle), end);
          double median = scratch[middle];
          if (count % 2 == 0) {
            // Even K: the mean of the two middle values, as numpy.median.
            const double lower =
                *std::max_element(begin, begin + static_cast<std::ptrdiff_t>(middle));
            median = (lower + median) / 2.0;
          }
          v[m] = median / bias;
        }
        break;
      }
      case Averaging::kExponential:
      case Averaging::kPeakHold:
        std::copy_n(accumulator.begin(), fft_bins, v);
        break;
    }
    if (options.sides == Sides::kTwoSided) {
      for (std::size_t m = fft_bins; m < fft_length; ++m) v[m] = v[fft_length - m];
    }
  }

  void StartInterval() {
    in_average = 0;
    if (options.averaging == Averaging::kMedian && options.segments_per_average == 0) {
      median_store.clear();  // keeps its capacity
    }
  }

  void AfterSegment(const AverageCallback& on_average) {
    if (options.segments_per_average == 0 || in_average < options.segments_per_average) return;
    FillAverage(report, median_scratch);
    if (on_average) on_average(report);
    StartInterval();
  }

  void Append(std::span<const double> samples) {
    if (held_end + samples.size() > held.size()) {
      const std::size_t count = held_end - held_begin;
      std::memmove(held.data(), held.data() + held_begin, count * sizeof(double));
      held_begin = 0;
      held_end = count;
    }
    std::copy(samples.begin(), samples.end(), held.begin() + static_cast<std::ptrdiff_t>(held_end));
    held_end += samples.size();
  }

  void DropPartial() {
    held_begin = 0;
    held_end = 0;
  }

  WelchOptions options;
  Window window;
  std::shared_ptr<const RealFft> fft;
  std::size_t segment_length;
  std::size_t hop;
  std::size_t fft_length;
  std::size_t fft_bins;
  double scale = 1.0;
  double exponential_weight = 1.0;
  AlignedBuffer fft_in;
  AlignedBuffer fft_out;
  // Samples towards the next segment live in held[held_begin, held_end), fewer than L of them.
  std::vector<double> held;
  std::size_t held_begin = 0;
  std::size_t held_end = 0;
  std::vector<double> accumulator;     // mean: sum; exponential: running value; peak: maximum
  std::vector<double> median_store;    // median: one row of fft_bins per segment
  std::vector<double> median_scratch;  // median: one bin across the interval's segments
  std::size_t in_average = 0;
  std::size_t exponential_count = 0;
  std::size_t total = 0;
  std::size_t rejected_blocks = 0;
  std::size_t rejected_samples = 0;
  AveragedSpectrum report;  // handed to the callback; its capacity is reused
};

Result<StreamingWelch> StreamingWelch::Create(const WelchOptions& options, FftPlanCache* plans) {
  if (Status status = options.Validate(); !status.ok()) return status;
  Result<Window> window = Window::Make(options.window, options.segment_length);
  if (!window.ok()) return window.status();
  if (window->sum() == 0.0 || window->sum_of_squares() == 0.0) {
    return Error{"window " + ToString(options.window) + " of length " +
                 SizeText(options.segment_length) + " sums to zero and cannot scale a spectrum"};
  }
  FftPlanCache& cache = plans != nullptr ? *plans : FftPlanCache::Shared();
  std::shared_ptr<const RealFft> fft = cache.Get(options.EffectiveFftLength());
  if (!fft) {
    return Error{"fft_length " + SizeText(options.EffectiveFftLength()) +
                 ": FFTW could not plan a transform of this length"};
  }
  return StreamingWelch(
      std::make_unique<State>(options, std::move(window).value(), std::move(fft)));
}

StreamingWelch::StreamingWelch(std::unique_ptr<State> state) : state_(std::move(state)) {}
StreamingWelch::StreamingWelch(StreamingWelch&&) noexcept = default;
StreamingWelch& StreamingWelch::operator=(StreamingWelch&&) noexcept = default;
StreamingWelch::~StreamingWelch() = default;

Status StreamingWelch::Push(std::span<const double> samples, const AverageCallback& on_average) {
  State& s = *state_;
  if (!AllFinite(samples)) {
    std::size_t bad = 0;
    std::size_t first_bad = 0;
    for (std::size_t i = 0; i < samples.size(); ++i) {
      if (!std::isfinite(samples[i])) {
        if (bad == 0) first_bad = i;
        ++bad;
      }
    }
    // The block is a hole in the stream: the partial segment before it must not be joined to
    // the samples after it.
    ++s.rejected_blocks;
    s.rejected_samples += samples.size();
    s.DropPartial();
    return Error{"block of " + SizeText(samples.size()) + " samples rejected: " + SizeText(bad) +
                 " non-finite (NaN or Inf) samples, the first at index " + SizeText(first_bad)};
  }

  const std::size_t length = s.segment_length;
  const std::size_t held_count = s.held_end - s.held_begin;
  const std::span<const double> held(s.held.data() + s.held_begin, held_count);
  const std::size_t available = held_count + samples.size();
  std::size_t start = 0;  // of the next segment, counted from the first held sample
  while (start + length <= available) {
    if (start < held_count) {
      const std::span<const double> tail = held.subspan(start);
      s.ProcessSegment(tail, samples.first(length - tail.size()));
    } else {
      s.ProcessSegment(samples.subspan(start - held_count, length), {});
    }
    s.AfterSegment(on_average);
    start += s.hop;
  }
  if (start >= held_count) {
    s.DropPartial();
    s.Append(samples.subspan(std::min(start - held_count, samples.size())));
  } else {
    s.held_begin += start;
    s.Append(samples);
  }
  return Status::Ok();
}

void StreamingWelch::Reset() { state_->DropPartial(); }

AveragedSpectrum StreamingWelch::CurrentAverage() const {
  AveragedSpectrum out;
  std::vector<double> scratch;
  state_->FillAverage(out, scratch);
  return out;
}

AveragedSpectrum StreamingWelch::TakeAverage() {
  AveragedSpectrum out = CurrentAverage();
  state_->StartInterval();
  return out;
}

const WelchOptions& StreamingWelch::options() const { return state_->options; }
std::size_t StreamingWelch::segments_in_average() const { return state_->in_average; }
std::size_t StreamingWelch::segments_total() const { return state_->total; }
std::size_t StreamingWelch::buffered_samples() const {
  return state_->held_end - state_->held_begin;
}
std::size_t StreamingWelch::rejected_blocks() const { return state_->rejected_blocks; }
std::size_t StreamingWelch::rejected_samples() const { return state_->rejected_samples; }

Result<AveragedSpectrum> Welch(std::span<const double> signal, const WelchOptions& options) {
  WelchOptions batch = options;
  batch.segments_per_average = 0;  // one average over the whole signal
  Result<StreamingWelch> welch = StreamingWelch::Create(batch);
  if (!welch.ok()) return welch.status();
  if (Status status = welch->Push(signal); !status.ok()) return status;
  return welch->TakeAverage();
}

}  // namespace spinward::estimators
