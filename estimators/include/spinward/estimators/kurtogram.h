// Kurtogram: the spectral kurtosis of a block over a grid of frequency bands of several widths, to
// choose the demodulation band for envelope analysis (Antoni, "Fast computation of the kurtogram
// for the detection of transient faults", MSSP 21, 2007). The band grid is Antoni's 1/3-binary one:
// [0, fs/2] split into 1, 2, 3, 4, 6, 8, 12, 16, ... equal bands. Each band's complex envelope is
// taken by FFT masking (AnalyticBandSignal), not by Antoni's filter tree: the same grid and
// measure, at more FFTs per band. Its kurtosis K = <|z|^4> / <|z|^2>^2 - 2 is 0 for Gaussian noise,
// -1 for a steady tone, and large for a band where impacts ring. Thread-safety: pure function.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "spinward/estimators/result.h"

namespace spinward::estimators {

struct KurtogramCell {
  std::size_t bands_in_level = 0;  // 1, 2, 3, 4, 6, 8, ...
  double low_hz = 0.0;
  double high_hz = 0.0;
  double kurtosis = 0.0;
};

struct Kurtogram {
  std::vector<KurtogramCell> cells;  // level by level, low band first
  KurtogramCell best;                // the cell of highest kurtosis
};

// Levels up to 2^max_level bands (max_level 1..10). Bands narrower than min_width_hz are left out,
// so a band always holds several defect harmonics' worth of envelope. Rejects an empty block,
// non-finite samples and a block shorter than 16 samples per narrowest band.
Result<Kurtogram> ComputeKurtogram(std::span<const double> block, double sample_rate_hz,
                                   int max_level, double min_width_hz);

}  // namespace spinward::estimators
