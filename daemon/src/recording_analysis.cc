#include "recording_analysis.h"

#include <cmath>
#include <cstdio>
#include <numbers>
#include <string>

namespace spinward::daemon {
namespace {

using estimators::Quantity;
using estimators::Unit;

int Order(Quantity quantity) {
  switch (quantity) {
    case Quantity::kAcceleration:
      return 0;
    case Quantity::kVelocity:
      return 1;
    case Quantity::kDisplacement:
      return 2;
  }
  return 0;
}

}  // namespace

std::string PsdUnitText(Unit unit, estimators::Scaling scaling) {
  const std::string name(estimators::ToString(unit));
  const bool compound = name.find('/') != std::string::npos || name.find('^') != std::string::npos;
  std::string text = compound ? "(" + name + ")^2" : name + "^2";
  if (scaling == estimators::Scaling::kDensity) text += "/Hz";
  return text;
}

Result<Analysis> AnalyzeRecording(const Recording& recording, const AnalysisOptions& options) {
  Analysis analysis;
  analysis.input_unit = options.sensitivity ? options.sensitivity->unit : options.input_unit;
  analysis.spectrum_unit = options.spectrum_unit;
  const int steps = Order(estimators::QuantityOf(options.spectrum_unit)) -
                    Order(estimators::QuantityOf(analysis.input_unit));
  if (steps < 0) {
    return Error{
        "a " + std::string(estimators::ToString(estimators::QuantityOf(analysis.input_unit))) +
        " input (" + std::string(estimators::ToString(analysis.input_unit)) + ") cannot give " +
        std::string(estimators::ToString(estimators::QuantityOf(options.spectrum_unit))) + " (" +
        std::string(estimators::ToString(options.spectrum_unit)) +
        "): that would need differentiating"};
  }

  std::vector<double> samples = recording.samples;
  if (options.sensitivity) {
    for (double& x : samples) x = options.sensitivity->VoltsToUnits(x);
  }

  estimators::WelchOptions welch = options.welch;
  welch.sample_rate_hz = recording.sample_rate_hz;
  if (Status valid = welch.Validate(); !valid.ok()) return valid;
  if (samples.size() < welch.segment_length) {
    return Error{recording.name + ": " + std::to_string(samples.size()) +
                 " samples are fewer than one segment of " + std::to_string(welch.segment_length) +
                 "; choose a shorter segment (--segment)"};
  }
  for (const auto& band : options.bands) {
    if (Status valid = band.Validate(welch.sample_rate_hz); !valid.ok()) return valid;
  }

  auto spectrum = estimators::Welch(samples, welch);
  if (!spectrum.ok()) return spectrum.status();
  analysis.spectrum = std::move(*spectrum);
  analysis.overlap = welch.overlap;

  // Bands need a one-sided density; reuse the printed spectrum when it is one.
  if (welch.scaling == estimators::Scaling::kDensity &&
      welch.sides == estimators::Sides::kOneSided) {
    analysis.density = analysis.spectrum;
  } else {
    estimators::WelchOptions density_options = welch;
    density_options.scaling = estimators::Scaling::kDensity;
    density_options.sides = estimators::Sides::kOneSided;
    auto density = estimators::Welch(samples, density_options);
    if (!density.ok()) return density.status();
    analysis.density = std::move(*density);
  }

  for (const auto& band : options.bands) {
    auto value = estimators::IntegrateBand(analysis.density, band, analysis.input_unit);
    if (!value.ok()) return value.status();
    analysis.bands.push_back({band, *value});
  }

  // The printed spectrum in the asked unit: a unit factor squared, and 1 / (2 pi f)^2 per
  // integration step. Factor 1 leaves the values bit for bit as the estimator gave them.
  const double in_si = estimators::ToSiFactor(analysis.input_unit);
  const double out_si = estimators::ToSiFactor(options.spectrum_unit);
  const double unit_factor = (in_si / out_si) * (in_si / out_si);
  if (steps > 0 || unit_factor != 1.0) {
    for (std::size_t m = 0; m < analysis.spectrum.values.size(); ++m) {
      double gain = unit_factor;
      if (steps > 0) {
        const double omega = 2.0 * std::numbers::pi * std::abs(analysis.spectrum.FrequencyHz(m));
        gain = omega > 0.0 ? unit_factor / std::pow(omega * omega, steps) : 0.0;
      }
      analysis.spectrum.values[m] *= gain;
    }
  }
  analysis.spectrum_unit_text = PsdUnitText(options.spectrum_unit, welch.scaling);

  estimators::IndicatorAccumulator indicators;
  if (!indicators.Add(samples)) {
    return Error{recording.name + ": samples hold NaN or Inf"};
  }
  analysis.overall = indicators.Current();
  return analysis;
}

}  // namespace spinward::daemon
