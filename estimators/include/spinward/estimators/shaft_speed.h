// Shaft speed from a once-per-revolution pulse train (a tachometer or key-phasor channel) or from
// the spectrum near the nominal running speed, and order bands: bands given in multiples of shaft
// speed that are turned into Hz for the speed of each interval. Thread-safety: plain values and
// pure functions.
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <vector>

#include "spinward/estimators/band_integrator.h"
#include "spinward/estimators/result.h"
#include "spinward/estimators/streaming_welch.h"
#include "spinward/estimators/units.h"

namespace spinward::estimators {

struct PulseSpeed {
  double shaft_hz = 0.0;
  std::size_t edges = 0;  // rising edges found in the block
};

// Rising edges are the crossings of the midpoint between the block's minimum and maximum (with a
// hysteresis of a quarter of that span, so noise on a flat top makes no extra edge), each placed
// between two samples by linear interpolation. Speed = (edges - 1) / (time of the last edge - time
// of the first): one pulse per revolution. Rejects non-finite samples, a flat block and a block
// with fewer than two edges (too short for one revolution, or no pulses).
Result<PulseSpeed> SpeedFromPulses(std::span<const double> block, double sample_rate_hz);

struct SpectrumSpeed {
  double shaft_hz = 0.0;
  double peak_density = 0.0;
};

// The running-speed line near the nominal rate: the highest density bin within
// nominal_hz * (1 +- search_fraction), refined by fitting a parabola through it and its two
// neighbours (the fit moves the estimate by at most half a bin). Rejects a search band holding no
// bin, a peak on the search band's edge (the line is outside it), and a spectrum that is not a
// one-sided density.
Result<SpectrumSpeed> SpeedFromSpectrum(const AveragedSpectrum& density, double nominal_hz,
                                        double search_fraction);

// A band in orders (multiples of shaft speed): 1x is [0.9, 1.1] orders around the running speed,
// a sub-synchronous band [0.35, 0.48] orders (oil whirl sits there), vane pass [count - 0.1,
// count + 0.1].
struct OrderBandSpec {
  std::string name;
  double lo_order = 0.0;
  double hi_order = 0.0;
  Unit unit = Unit::kMillimetresPerSecond;

  // lo >= 0, hi > lo, both finite; names the bad field.
  Status Validate() const;
  // The band in Hz at this shaft rate, its top clipped to Nyquist; fails when the band's bottom is
  // at or above Nyquist.
  Result<BandSpec> AtSpeed(double shaft_hz, double sample_rate_hz) const;
  bool operator==(const OrderBandSpec&) const = default;
};

}  // namespace spinward::estimators
