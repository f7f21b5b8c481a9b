// Band integration of a one-sided density.
//
// Why fractional bins: a band edge rarely falls on a bin boundary. Rounding edges to whole bins
// makes a band's value jump as an edge crosses a boundary and lets two adjacent bands double-count
// (or both miss) the bin between them. Giving each bin the share of its interval that the band
// covers fixes both, at the price of treating the density as flat within a bin, which it is not for
// a line lying between bins; no bin policy can recover that, only a finer resolution can.
//
// Power is density x bin width (fs / M), so zero-padding (M > L) changes how many bins a line
// spreads over but not the band's total. Cost: one pass over the bins the band touches.
#include "spinward/estimators/band_integrator.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <string>

namespace spinward::estimators {
namespace {

// A number as a person would write it: shortest form that reads back the same.
std::string Num(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.10g", value);
  return buffer;
}

std::string BandLabel(const BandSpec& band) { return "band '" + band.name + "'"; }

// How many times a quantity is differentiated from displacement: acceleration 2, velocity 1.
int DerivativeOrder(Quantity quantity) {
  switch (quantity) {
    case Quantity::kAcceleration:
      return 2;
    case Quantity::kVelocity:
      return 1;
    case Quantity::kDisplacement:
      return 0;
  }
  return 0;
}

}  // namespace

Status BandSpec::Validate(double sample_rate_hz) const {
  const std::string label = BandLabel(*this);
  if (!std::isfinite(sample_rate_hz) || sample_rate_hz <= 0.0) {
    return Status::Fail(label + ": sample_rate_hz " + Num(sample_rate_hz) +
                        " must be positive and finite");
  }
  if (!std::isfinite(lo_hz) || lo_hz < 0.0) {
    return Status::Fail(label + ": lo_hz " + Num(lo_hz) + " must be finite and >= 0");
  }
  if (!std::isfinite(hi_hz) || hi_hz <= lo_hz) {
    return Status::Fail(label + ": hi_hz " + Num(hi_hz) + " must be finite and above lo_hz " +
                        Num(lo_hz));
  }
  const double nyquist = sample_rate_hz / 2.0;
  if (hi_hz > nyquist) {
    return Status::Fail(label + ": hi_hz " + Num(hi_hz) + " is above the Nyquist frequency " +
                        Num(nyquist) + " Hz (sample_rate_hz " + Num(sample_rate_hz) + " / 2)");
  }
  return Status::Ok();
}

double BinCoverage(std::size_t bin, std::size_t bin_count, double bin_width_hz, double lo_hz,
                   double hi_hz, bool last_bin_is_nyquist) {
  if (bin >= bin_count || !(bin_width_hz > 0.0)) return 0.0;
  const double centre = static_cast<double>(bin) * bin_width_hz;
  const double lower = bin == 0 ? 0.0 : centre - 0.5 * bin_width_hz;
  const double upper =
      (last_bin_is_nyquist && bin + 1 == bin_count) ? centre : centre + 0.5 * bin_width_hz;
  const double width = upper - lower;
  if (!(width > 0.0)) return 0.0;
  const double covered = std::min(hi_hz, upper) - std::max(lo_hz, lower);
  if (covered <= 0.0) return 0.0;
  return std::min(1.0, covered / width);
}

Result<BandValue> IntegrateBand(const AveragedSpectrum& density, const BandSpec& band,
                                Unit input_unit) {
  const std::string label = BandLabel(band);
  if (density.scaling != Scaling::kDensity) {
    return Error{label +
                 ": spectrum scaling is 'spectrum' (unit^2); band integration needs a "
                 "density (unit^2/Hz)"};
  }
  if (density.sides != Sides::kOneSided) {
    return Error{label + ": spectrum is two-sided; band integration needs a one-sided density"};
  }
  if (density.values.empty()) {
    return Error{label + ": spectrum is empty (no segment completed: segment_count " +
                 std::to_string(density.segment_count) + ")"};
  }
  if (density.fft_length == 0 || density.values.size() != density.fft_length / 2 + 1) {
    return Error{label + ": spectrum has " + std::to_string(density.values.size()) +
                 " values but fft_length " + std::to_string(density.fft_length) +
                 " needs fft_length / 2 + 1 of them"};
  }
  if (Status valid = band.Validate(density.sample_rate_hz); !valid.ok())
    return Error{valid.message()};

  const Quantity in_quantity = QuantityOf(input_unit);
  const Quantity out_quantity = QuantityOf(band.unit);
  const int integrations = DerivativeOrder(in_quantity) - DerivativeOrder(out_quantity);
  if (integrations < 0) {
    return Error{label + ": unit " + std::string(ToString(band.unit)) + " measures " +
                 std::string(ToString(out_quantity)) + " but the spectrum is " +
                 std::string(ToString(in_quantity)) + " in " + std::string(ToString(input_unit)) +
                 "; only integration (acceleration -> velocity -> displacement) is supported"};
  }

  const std::size_t bin_count = density.values.size();
  const double df = density.BinWidthHz();
  const bool last_is_nyquist = density.fft_length % 2 == 0;
  // input unit^2 -> SI^2, and SI^2 -> band unit^2, folded into one factor.
  const double in_si = ToSiFactor(input_unit);
  const double out_si = ToSiFactor(band.unit);
  const double unit_scale = (in_si * in_si) / (out_si * out_si);

  // Only the bins whose interval can touch [lo, hi]: bin m spans at most [(m - 1/2) df, (m + 1/2)
  // df].
  std::size_t first = static_cast<std::size_t>(std::max(0.0, std::floor(band.lo_hz / df - 0.5)));
  std::size_t last =
      std::min(bin_count - 1, static_cast<std::size_t>(std::ceil(band.hi_hz / df + 0.5)));
  if (integrations > 0 && first == 0) first = 1;  // DC has no velocity or displacement

  double sum = 0.0;
  for (std::size_t m = first; m <= last; ++m) {
    const double coverage = BinCoverage(m, bin_count, df, band.lo_hz, band.hi_hz, last_is_nyquist);
    if (coverage == 0.0) continue;
    double power = density.values[m] * df * coverage;
    if (integrations > 0) {
      const double omega = 2.0 * std::numbers::pi * static_cast<double>(m) * df;
      const double omega2 = omega * omega;
      power /= integrations == 1 ? omega2 : omega2 * omega2;
    }
    sum += power;
  }

  BandValue value;
  value.mean_square = sum * unit_scale;
  // A density can hold tiny negative rounding (never from |X|^2, but from a caller's arithmetic).
  value.rms = std::sqrt(std::max(0.0, value.mean_square));
  return value;
}

}  // namespace spinward::estimators
