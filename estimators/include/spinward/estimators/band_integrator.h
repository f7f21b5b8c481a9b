// Band values from a one-sided power spectral density: the mean square (and RMS) of the signal
// between lo and hi Hz, optionally converted from acceleration to velocity or displacement.
//
// Bin-edge policy: bin m stands for the frequency interval [f_m - df/2, f_m + df/2] (the DC bin for
// [0, df/2], the Nyquist bin of an even FFT for [fs/2 - df/2, fs/2]); a band takes from each bin
// the fraction of that interval it covers. So adjacent bands add up exactly to the band that spans
// them, and a band's value moves smoothly as its edges move. Power is density x df: never summed
// 'spectrum' bins, which overcount a line's power by the window's ENBW x fft_length / segment.
// Integration to velocity divides each bin by (2 pi f_m)^2 (displacement: (2 pi f_m)^4); the DC bin
// is never included in an integrated quantity.
// Thread-safety: pure functions.
#pragma once

#include <span>
#include <string>

#include "spinward/estimators/result.h"
#include "spinward/estimators/streaming_welch.h"
#include "spinward/estimators/units.h"

namespace spinward::estimators {

struct BandSpec {
  std::string name;
  double lo_hz = 0.0;
  double hi_hz = 0.0;
  Unit unit = Unit::kMillimetresPerSecond;  // its quantity says what the band measures

  // Names the bad field: lo < 0, hi <= lo, hi above Nyquist (sample_rate_hz / 2).
  Status Validate(double sample_rate_hz) const;
  bool operator==(const BandSpec&) const = default;
};

struct BandValue {
  double mean_square = 0.0;  // in unit^2
  double rms = 0.0;          // in unit
};

// density: a one-sided, density-scaled spectrum of acceleration in `input_unit` (a velocity
// spectrum also works: it integrates to displacement; differentiating is refused). The result is in
// band.unit, converted through SI (g <-> m/s^2, in/s <-> mm/s, mil <-> um). Fails, naming the band,
// on a spectrum-scaled, two-sided, empty or mis-sized spectrum and on a band that fails Validate.
Result<BandValue> IntegrateBand(const AveragedSpectrum& density, const BandSpec& band,
                                Unit input_unit);

// The fraction of bin `bin` (of width bin_width_hz) that [lo_hz, hi_hz] covers, per the policy
// above.
double BinCoverage(std::size_t bin, std::size_t bin_count, double bin_width_hz, double lo_hz,
                   double hi_hz, bool last_bin_is_nyquist);

}  // namespace spinward::estimators
