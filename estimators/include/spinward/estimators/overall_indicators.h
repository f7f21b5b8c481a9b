// Time-domain indicators of one averaging interval: mean (the DC bias), RMS about the mean, peak
// (largest excursion from the mean), peak-to-peak, crest factor (peak / RMS) and kurtosis
// (m4 / m2^2, 3 for Gaussian noise, 1.5 for a sine).
// Accumulated block by block: each block's mean and central moments come from two tight passes over
// its samples, then merge into the running totals with the pairwise update of central moments
// (Chan, Golub and LeVeque, 1979; Pebay, 2008), which stays accurate when a large DC offset rides
// under a small vibration, unlike raw power sums.
// Degenerate intervals give zeros, never NaN: no samples -> all zero; one sample or a constant
// signal (zero variance) -> rms, peak, peak_to_peak, crest_factor and kurtosis are 0.
// A block holding NaN or Inf is rejected whole and counted, as StreamingWelch does.
// Thread-safety: one accumulator per thread.
#pragma once

#include <cstddef>
#include <span>

namespace spinward::estimators {

struct OverallIndicators {
  std::size_t count = 0;
  double mean = 0.0;
  double rms = 0.0;  // about the mean (AC RMS)
  double peak = 0.0;
  double peak_to_peak = 0.0;
  double crest_factor = 0.0;
  double kurtosis = 0.0;  // not excess: m4 / m2^2 with population moments
  double min = 0.0;
  double max = 0.0;
};

class IndicatorAccumulator {
 public:
  // Returns false (and uses none of it) when the block holds a NaN or Inf.
  bool Add(std::span<const double> samples);
  // Merges another interval's accumulator, as if its samples had been added here.
  void Merge(const IndicatorAccumulator& other);
  OverallIndicators Current() const;
  // Starts a new interval; clears the rejection counters too.
  void Reset();
  std::size_t count() const { return count_; }
  std::size_t rejected_blocks() const { return rejected_blocks_; }
  std::size_t rejected_samples() const { return rejected_samples_; }

 private:
  std::size_t count_ = 0;
  double mean_ = 0.0;
  double m2_ = 0.0;  // sums of powers of deviations from the mean
  double m3_ = 0.0;
  double m4_ = 0.0;
  double min_ = 0.0;
  double max_ = 0.0;
  std::size_t rejected_blocks_ = 0;
  std::size_t rejected_samples_ = 0;
};

}  // namespace spinward::estimators
