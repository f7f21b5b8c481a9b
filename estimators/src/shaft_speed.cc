#include "spinward/estimators/shaft_speed.h"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace spinward::estimators {
namespace {

std::string Num(double value) {
  char text[32];
  std::snprintf(text, sizeof(text), "%.6g", value);
  return text;
}

}  // namespace

Result<PulseSpeed> SpeedFromPulses(std::span<const double> block, double sample_rate_hz) {
  if (!(sample_rate_hz > 0.0) || !std::isfinite(sample_rate_hz)) {
    return Error{"sample_rate_hz " + Num(sample_rate_hz) + " must be finite and positive"};
  }
  if (block.empty()) return Error{"tachometer block is empty"};
  double low = block[0];
  double high = block[0];
  for (double x : block) {
    if (!std::isfinite(x)) return Error{"tachometer block holds a non-finite sample"};
    low = std::min(low, x);
    high = std::max(high, x);
  }
  const double span = high - low;
  if (!(span > 0.0)) return Error{"tachometer signal is flat: no pulses"};
  const double mid = low + span / 2.0;
  const double rearm = mid - span / 4.0;  // the signal must fall below this before the next edge
  bool armed = block[0] < mid;
  std::size_t edges = 0;
  double first = 0.0;
  double last = 0.0;
  for (std::size_t i = 1; i < block.size(); ++i) {
    if (!armed) {
      armed = block[i] < rearm;
      continue;
    }
    if (block[i - 1] < mid && block[i] >= mid) {
      const double frac = (mid - block[i - 1]) / (block[i] - block[i - 1]);
      const double t = (static_cast<double>(i - 1) + frac) / sample_rate_hz;
      if (edges == 0) first = t;
      last = t;
      ++edges;
      armed = false;
    }
  }
  if (edges < 2) {
    return Error{"tachometer block holds " + std::to_string(edges) +
                 " pulse edge(s); at least 2 are needed for a speed"};
  }
  return PulseSpeed{static_cast<double>(edges - 1) / (last - first), edges};
}

Result<SpectrumSpeed> SpeedFromSpectrum(const AveragedSpectrum& density, double nominal_hz,
                                        double search_fraction) {
  if (density.scaling != Scaling::kDensity || density.sides != Sides::kOneSided) {
    return Error{"speed search needs a one-sided density spectrum"};
  }
  if (!(nominal_hz > 0.0) || !std::isfinite(nominal_hz)) {
    return Error{"nominal speed " + Num(nominal_hz) + " Hz must be finite and positive"};
  }
  if (!(search_fraction > 0.0) || !(search_fraction < 1.0)) {
    return Error{"speed search fraction " + Num(search_fraction) + " must be in (0, 1)"};
  }
  const double width = density.BinWidthHz();
  const std::size_t n = density.values.size();
  if (n < 3 || !(width > 0.0)) return Error{"speed search: the spectrum is empty"};
  const auto lo = static_cast<std::size_t>(std::ceil(nominal_hz * (1.0 - search_fraction) / width));
  const auto hi = std::min(
      n - 1, static_cast<std::size_t>(std::floor(nominal_hz * (1.0 + search_fraction) / width)));
  if (lo > hi || hi < 1) {
    return Error{"speed search band " + Num(nominal_hz * (1.0 - search_fraction)) + "-" +
                 Num(nominal_hz * (1.0 + search_fraction)) + " Hz holds no bin of width " +
                 Num(width) + " Hz"};
  }
  std::size_t peak = lo;
  for (std::size_t k = lo; k <= hi; ++k) {
    if (density.values[k] > density.values[peak]) peak = k;
  }
  if ((peak == lo && lo > 0 && density.values[lo - 1] > density.values[lo]) ||
      (peak == hi && hi + 1 < n && density.values[hi + 1] > density.values[hi])) {
    return Error{"no running-speed line within " + Num(search_fraction * 100.0) + " % of " +
                 Num(nominal_hz) + " Hz (the highest bin is on the search band's edge)"};
  }
  double offset = 0.0;
  if (peak > 0 && peak + 1 < n) {
    const double a = density.values[peak - 1];
    const double b = density.values[peak];
    const double c = density.values[peak + 1];
    const double curvature = a - 2.0 * b + c;
    if (curvature < 0.0) offset = std::clamp(0.5 * (a - c) / curvature, -0.5, 0.5);
  }
  return SpectrumSpeed{(static_cast<double>(peak) + offset) * width, density.values[peak]};
}

Status OrderBandSpec::Validate() const {
  if (!std::isfinite(lo_order) || lo_order < 0.0) {
    return Error{"order band " + name + ": lo_order " + Num(lo_order) + " must be 0 or more"};
  }
  if (!std::isfinite(hi_order) || hi_order <= lo_order) {
    return Error{"order band " + name + ": hi_order " + Num(hi_order) + " must be above lo_order " +
                 Num(lo_order)};
  }
  return Status::Ok();
}

Result<BandSpec> OrderBandSpec::AtSpeed(double shaft_hz, double sample_rate_hz) const {
  if (Status s = Validate(); !s.ok()) return Error{s.message()};
  if (!(shaft_hz > 0.0) || !std::isfinite(shaft_hz)) {
    return Error{"order band " + name + ": shaft speed " + Num(shaft_hz) + " Hz is not positive"};
  }
  const double nyquist = sample_rate_hz / 2.0;
  BandSpec band{name, lo_order * shaft_hz, std::min(hi_order * shaft_hz, nyquist), unit};
  if (band.lo_hz >= nyquist) {
    return Error{"order band " + name + " starts at " + Num(band.lo_hz) +
                 " Hz, at or above the Nyquist frequency " + Num(nyquist) + " Hz"};
  }
  return band;
}

}  // namespace spinward::estimators
