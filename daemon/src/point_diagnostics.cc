#include "spinward/daemon/point_diagnostics.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <utility>

#include "spinward/config/diagnostics_config.h"
#include "spinward/estimators/band_integrator.h"
#include "spinward/estimators/envelope_spectrum.h"
#include "spinward/estimators/kurtogram.h"

namespace spinward::daemon {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

storage::BandReading Reading(std::string name, std::string unit, double lo_hz, double hi_hz,
                             double value) {
  storage::BandReading reading;
  reading.name = std::move(name);
  reading.unit = std::move(unit);
  reading.lo_hz = lo_hz;
  reading.hi_hz = hi_hz;
  reading.rms = value;
  return reading;
}

}  // namespace

std::string_view ToString(SpeedSource source) {
  switch (source) {
    case SpeedSource::kNominal:
      return "nominal";
    case SpeedSource::kTachometer:
      return "tachometer";
    case SpeedSource::kSpectrum:
      return "spectrum";
  }
  return "unknown";
}

void SpeedBoard::Publish(const std::string& machine_id, Reading reading) {
  std::lock_guard lock(mutex_);
  latest_[machine_id] = reading;
}

std::optional<SpeedBoard::Reading> SpeedBoard::Latest(const std::string& machine_id) const {
  std::lock_guard lock(mutex_);
  auto it = latest_.find(machine_id);
  if (it == latest_.end()) return std::nullopt;
  return it->second;
}

SpeedBoard& SpeedBoard::Shared() {
  static SpeedBoard board;
  return board;
}

PointDiagnostics::PointDiagnostics(DiagnosticSettings settings, double sample_rate_hz,
                                   estimators::Unit sample_unit, SpeedBoard* board)
    : settings_(std::move(settings)),
      sample_rate_hz_(sample_rate_hz),
      sample_unit_(sample_unit),
      board_(board != nullptr ? board : &SpeedBoard::Shared()) {}

void PointDiagnostics::Add(std::span<const double> samples) {
  if (!settings_.Active()) return;
  samples_.insert(samples_.end(), samples.begin(), samples.end());
}

// Tachometer first (when fresh), then the spectrum's running-speed line, then the nominal speed.
PointDiagnostics::Speed PointDiagnostics::CurrentSpeed(const estimators::AveragedSpectrum& spectrum,
                                                       std::int64_t end_ns) const {
  const double nominal = settings_.nominal_shaft_hz;
  if (settings_.speed_source == SpeedSource::kTachometer) {
    if (auto reading = board_->Latest(settings_.machine_id)) {
      const double age_s = std::fabs(static_cast<double>(end_ns - reading->time_ns)) / 1e9;
      if (age_s <= settings_.tachometer_stale_s) {
        return {reading->shaft_hz, SpeedSource::kTachometer};
      }
    }
  }
  if (settings_.speed_source != SpeedSource::kNominal) {
    auto found = estimators::SpeedFromSpectrum(spectrum, nominal, settings_.speed_search_fraction);
    if (found.ok()) return {found->shaft_hz, SpeedSource::kSpectrum};
  }
  return {nominal, SpeedSource::kNominal};
}

std::vector<storage::BandReading> PointDiagnostics::Measure(
    const estimators::AveragedSpectrum& spectrum, std::int64_t interval_end_ns) {
  std::vector<storage::BandReading> out;
  if (!settings_.Active()) return out;
  if (settings_.tachometer) {
    // The pulse channel: its speed is the machine's; other measures make no sense on pulses.
    auto pulses = estimators::SpeedFromPulses(samples_, sample_rate_hz_);
    double rpm = kNaN;
    if (pulses.ok()) {
      board_->Publish(settings_.machine_id, {pulses->shaft_hz, interval_end_ns});
      rpm = pulses->shaft_hz * 60.0;
    }
    out.push_back(Reading(std::string(kSpeedMeasure), "rpm", 0.0, 0.0, rpm));
    samples_.clear();
    return out;
  }
  const Speed speed = CurrentSpeed(spectrum, interval_end_ns);
  out.push_back(Reading(std::string(kSpeedMeasure), "rpm", speed.shaft_hz, speed.shaft_hz,
                        speed.shaft_hz * 60.0));
  for (const auto& order : settings_.order_bands) {
    auto band = order.AtSpeed(speed.shaft_hz, sample_rate_hz_);
    double value = kNaN;
    double lo = 0.0;
    double hi = 0.0;
    if (band.ok()) {
      lo = band->lo_hz;
      hi = band->hi_hz;
      auto integrated = estimators::IntegrateBand(spectrum, *band, sample_unit_);
      if (integrated.ok()) value = integrated->rms;
    }
    out.push_back(
        Reading(order.name, std::string(estimators::ToString(order.unit)), lo, hi, value));
  }
  AddEnvelopeMeasures(speed.shaft_hz, out);
  samples_.clear();
  return out;
}

// For each defect line: env_<line> is the RMS of the squared envelope's lines at the defect
// frequency and its harmonics (the square root of their summed mean squares), env_<line>_ratio
// their summed power over the envelope spectrum's median level in the same widths (about 1 where
// there is no line).
void PointDiagnostics::AddEnvelopeMeasures(double shaft_hz,
                                           std::vector<storage::BandReading>& out) {
  if (!settings_.envelope || !settings_.bearing) return;
  const EnvelopeSettings& env = *settings_.envelope;
  auto defects = estimators::DefectFrequenciesAt(*settings_.bearing, shaft_hz);
  struct Line {
    const char* name;
    double hz;
  };
  const Line lines[] = {{"bpfo", defects.ok() ? defects->bpfo_hz : kNaN},
                        {"bpfi", defects.ok() ? defects->bpfi_hz : kNaN},
                        {"bsf", defects.ok() ? defects->ball_pass_hz : kNaN},
                        {"ftf", defects.ok() ? defects->ftf_hz : kNaN}};

  double highest = 0.0;
  for (const Line& line : lines) highest = std::max(highest, line.hz);
  double band_low = env.band_low_hz;
  double band_high = env.band_high_hz;
  if (band_low == 0.0 && band_high == 0.0 && defects.ok()) {
    // No band configured: the kurtogram's choice, made once. The band must be wide enough to hold
    // the envelope's lines up to the highest harmonic sought, twice over.
    if (chosen_high_hz_ == 0.0) {
      const double min_width = 2.0 * static_cast<double>(env.harmonics) * highest;
      auto kurtogram = estimators::ComputeKurtogram(samples_, sample_rate_hz_, 5, min_width);
      if (kurtogram.ok()) {
        chosen_low_hz_ = kurtogram->best.low_hz;
        chosen_high_hz_ = kurtogram->best.high_hz;
      }
    }
    band_low = chosen_low_hz_;
    band_high = chosen_high_hz_;
  }
  std::optional<estimators::AveragedSpectrum> envelope;
  if (defects.ok() && band_high > band_low) {
    estimators::EnvelopeOptions options;
    options.sample_rate_hz = sample_rate_hz_;
    options.band_low_hz = band_low;
    options.band_high_hz = band_high;
    options.segment_length = env.segment_length;
    options.overlap = env.segment_length / 2;
    auto spectrum = estimators::EnvelopeSpectrum(samples_, options);
    if (spectrum.ok() && spectrum->segment_count > 0) envelope = std::move(spectrum).value();
  }
  const std::string energy_unit = config::EnvelopeEnergyUnit(sample_unit_);
  for (const Line& line : lines) {
    double energy = kNaN;
    double ratio = kNaN;
    if (envelope) {
      estimators::LineSearch search;
      search.frequency_hz = line.hz;
      search.harmonics = env.harmonics;
      search.tolerance = env.tolerance;
      // The background: the low part of the envelope spectrum where the lines are sought, never
      // beyond the demodulation band's width (a squared envelope holds nothing above it).
      search.background_max_hz =
          std::min(band_high - band_low,
                   1.5 * highest * static_cast<double>(std::max<std::size_t>(env.harmonics, 1)));
      auto found = estimators::FindHarmonicLines(*envelope, search);
      if (found.ok() && !found->empty()) {
        double power = 0.0;
        double background = 0.0;
        for (const auto& harmonic : *found) {
          power += harmonic.power;
          background += harmonic.background_power;
        }
        energy = std::sqrt(power);
        ratio = background > 0.0 ? power / background : kNaN;
      }
    }
    const double lo = line.hz * (1.0 - env.tolerance);
    const double hi = line.hz * (1.0 + env.tolerance);
    out.push_back(Reading(std::string(kEnvelopePrefix) + line.name, energy_unit, lo, hi, energy));
    out.push_back(Reading(std::string(kEnvelopePrefix) + line.name + "_ratio", "1", lo, hi, ratio));
  }
}

}  // namespace spinward::daemon
