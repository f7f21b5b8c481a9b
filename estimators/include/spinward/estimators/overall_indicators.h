// Time-domain indicators of one averaging interval: mean (the DC bias), RMS about the mean, peak
// (largest excursion from the mean), peak-to-peak, crest factor (peak / RMS) and kurtosis
// (m4 / m2^2, 3 for Gaussian noise, 1.5 for a sine).
// Accumulated block by block with the pairwise update of central moments (Pebay, 2008), which stays
// accurate when a large DC offset rides under a small vibration, unlike raw power sums.
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
  double kurtosis = 0.0;
  double min = 0.0;
  double max = 0.0;
};

class IndicatorAccumulator {
 public:
  void Add(std::span<const double> samples);
  OverallIndicators Current() const;
  void Reset();
  std::size_t count() const { return count_; }

 private:
  std::size_t count_ = 0;
  double mean_ = 0.0;
  double m2_ = 0.0;  // sums of powers of deviations from the mean
  double m3_ = 0.0;
  double m4_ = 0.0;
  double min_ = 0.0;
  double max_ = 0.0;
};

}  // namespace spinward::estimators
