// Streaming Welch power spectral density, one instance per channel.
//
// Samples arrive in blocks of any size. A running overlap buffer keeps the samples that belong to the
// next, not yet complete segment, so the segments (and so the averages) are exactly those a batch
// scipy.signal.welch would cut from the concatenated stream, whatever the block boundaries.
// Per segment: detrend -> window -> zero-pad to the FFT length -> real FFT -> |X|^2 scaled -> average.
// The hot path (Push) allocates nothing, except Median averaging with segments_per_average == 0,
// which must keep every segment's spectrum until the average is taken.
// Thread-safety: one instance is used by one thread at a time; instances share FFT plans safely.
#pragma once

#include <cstddef>
#include <functional>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/result.h"
#include "spinward/estimators/window.h"

namespace spinward::estimators {

class FftPlanCache;

enum class Detrend { kNone, kMean, kLinear };
enum class Scaling { kDensity, kSpectrum };  // unit^2/Hz, or unit^2 (power of a sine's line)
enum class Sides { kOneSided, kTwoSided };
enum class Averaging { kMean, kMedian, kExponential, kPeakHold };

Result<Detrend> ParseDetrend(std::string_view text);        // "none", "mean" ("constant"), "linear"
Result<Scaling> ParseScaling(std::string_view text);        // "density", "spectrum"
Result<Sides> ParseSides(std::string_view text);            // "one" ("onesided"), "two" ("twosided")
Result<Averaging> ParseAveraging(std::string_view text);    // "mean", "median", "exponential", "peak"
std::string_view ToString(Detrend value);
std::string_view ToString(Scaling value);
std::string_view ToString(Sides value);
std::string_view ToString(Averaging value);

struct WelchOptions {
  double sample_rate_hz = 0.0;
  std::size_t segment_length = 4096;
  std::size_t overlap = 2048;  // samples shared by consecutive segments; see OverlapFromPercent
  std::size_t fft_length = 0;  // 0 means equal to segment_length; larger zero-pads
  WindowSpec window;
  Detrend detrend = Detrend::kMean;
  Scaling scaling = Scaling::kDensity;
  Sides sides = Sides::kOneSided;
  Averaging averaging = Averaging::kMean;
  // Segments that make one completed average (delivered to Push's callback); 0: the average runs
  // until TakeAverage(). Exponential averaging reports its running value every this many segments.
  std::size_t segments_per_average = 0;
  double exponential_time_constant_s = 1.0;  // kExponential only: weight 1 - exp(-hop / (fs * tau))

  // Names the first bad field and its value, e.g. "overlap 4096 must be less than segment_length 4096".
  Status Validate() const;
  std::size_t EffectiveFftLength() const { return fft_length == 0 ? segment_length : fft_length; }
  std::size_t Hop() const { return segment_length - overlap; }
  std::size_t BinCount() const;  // one-sided: M/2 + 1; two-sided: M
  bool operator==(const WelchOptions&) const = default;
};

// Overlap in whole samples for a percentage of the segment, rounded to the nearest sample.
// Rejects percentages outside [0, 100).
Result<std::size_t> OverlapFromPercent(std::size_t segment_length, double percent);

// An averaged spectrum with what is needed to read it. Two-sided spectra are in FFT order
// (0, positive frequencies, then negative), as numpy.fft.fftfreq orders them.
struct AveragedSpectrum {
  std::vector<double> values;
  double sample_rate_hz = 0.0;
  std::size_t fft_length = 0;
  std::size_t segment_length = 0;
  std::size_t segment_count = 0;  // segments that went into this average
  Scaling scaling = Scaling::kDensity;
  Sides sides = Sides::kOneSided;
  Averaging averaging = Averaging::kMean;
  WindowSpec window;

  double BinWidthHz() const { return sample_rate_hz / static_cast<double>(fft_length); }
  double FrequencyHz(std::size_t bin) const;
  std::vector<double> FrequenciesHz() const;
};

class StreamingWelch {
 public:
  using AverageCallback = std::function<void(const AveragedSpectrum&)>;

  // Uses FftPlanCache::Shared() when plans is null.
  static Result<StreamingWelch> Create(const WelchOptions& options,
                                       FftPlanCache* plans = nullptr);
  StreamingWelch(StreamingWelch&&) noexcept;
  StreamingWelch& operator=(StreamingWelch&&) noexcept;
  StreamingWelch(const StreamingWelch&) = delete;
  StreamingWelch& operator=(const StreamingWelch&) = delete;
  ~StreamingWelch();

  // Feeds a block. A block holding NaN or Inf is rejected whole (nothing of it is used), counted,
  // and reported in the returned Status. on_average is called for each completed average when
  // segments_per_average > 0; the reference is valid during the call only.
  Status Push(std::span<const double> samples, const AverageCallback& on_average = {});

  // A gap in the stream: drops the partial segment so no segment spans the gap. The average in
  // progress keeps the segments it already has.
  void Reset();

  // The average of the segments since the last take (exponential: the running average).
  // Returns an empty `values` when no segment has completed yet.
  AveragedSpectrum CurrentAverage() const;
  // As CurrentAverage, then starts a new averaging interval.
  AveragedSpectrum TakeAverage();

  const WelchOptions& options() const;
  std::size_t segments_in_average() const;
  std::size_t segments_total() const;
  std::size_t buffered_samples() const;   // samples held towards the next segment
  std::size_t rejected_blocks() const;
  std::size_t rejected_samples() const;

 private:
  struct State;
  explicit StreamingWelch(std::unique_ptr<State> state);
  std::unique_ptr<State> state_;
};

// Batch Welch over a whole signal, through the same streaming code; a signal shorter than one
// segment gives an AveragedSpectrum with no values and segment_count 0 (SciPy instead shortens the
// segment to the signal; we keep the configured resolution and report that nothing was averaged).
Result<AveragedSpectrum> Welch(std::span<const double> signal, const WelchOptions& options);

}  // namespace spinward::estimators
