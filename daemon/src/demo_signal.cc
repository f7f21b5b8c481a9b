// The signal is built sample by sample from closed forms (sines, decaying sinusoids), so block
// boundaries cannot show in it and it costs a few multiplications per sample and live impact.
#include "demo_signal.h"

#include <cmath>
#include <numbers>
#include <string>

namespace spinward::daemon {
namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;

// Acceleration peak (m/s^2) of a line whose velocity peak is `mm_s` at `hz`.
double AccelPeak(double mm_s, double hz) { return mm_s * 1e-3 * kTwoPi * hz; }

}  // namespace

double PumpSignalSpec::BpfoHz() const {
  const double ratio =
      ball_diameter_mm / pitch_diameter_mm * std::cos(contact_angle_deg * std::numbers::pi / 180.0);
  return rolling_elements * ShaftHz() / 2.0 * (1.0 - ratio);
}

Status PumpSignalSpec::Validate() const {
  if (!(sample_rate_hz > 0.0)) {
    return Status::Fail("sample_rate_hz " + std::to_string(sample_rate_hz) + " must be positive");
  }
  if (!(shaft_rpm > 0.0)) return Status::Fail("shaft_rpm must be positive");
  if (vane_count < 1 || rolling_elements < 1) {
    return Status::Fail("vane_count and rolling_elements must be at least 1");
  }
  if (!(ball_diameter_mm > 0.0) || !(pitch_diameter_mm > ball_diameter_mm)) {
    return Status::Fail("bearing: need 0 < ball_diameter_mm < pitch_diameter_mm");
  }
  if (!(resonance_hz > 0.0) || resonance_hz >= sample_rate_hz / 2.0) {
    return Status::Fail("resonance_hz " + std::to_string(resonance_hz) +
                        " must lie below the Nyquist frequency");
  }
  if (!(damping_ratio > 0.0 && damping_ratio < 1.0)) {
    return Status::Fail("damping_ratio must lie in (0, 1)");
  }
  if (!(slip >= 0.0 && slip < 0.5)) return Status::Fail("slip must lie in [0, 0.5)");
  if (!(noise_rms_m_s2 >= 0.0)) return Status::Fail("noise_rms_m_s2 must not be negative");
  if (VanePassHz() * 1.0 >= sample_rate_hz / 2.0) {
    return Status::Fail("vane pass frequency lies above the Nyquist frequency");
  }
  return Status::Ok();
}

Result<PumpSignalGenerator> PumpSignalGenerator::Create(const PumpSignalSpec& spec) {
  if (Status valid = spec.Validate(); !valid.ok()) return valid;
  return PumpSignalGenerator(spec);
}

PumpSignalGenerator::PumpSignalGenerator(const PumpSignalSpec& spec)
    : spec_(spec), rng_(spec.seed) {
  const double decay_rate = spec_.damping_ratio * kTwoPi * spec_.resonance_hz;
  ring_s_ = std::log(1e5) / decay_rate;
  next_impact_s_ = NextImpactGap() * 0.5;  // the first impact lands part way into a ball pass
}

double PumpSignalGenerator::NextImpactGap() {
  const double period = 1.0 / spec_.BpfoHz();
  return period * (1.0 + spec_.slip * normal_(rng_));
}

void PumpSignalGenerator::Generate(std::span<double> out) {
  const double fs = spec_.sample_rate_hz;
  const double f1 = spec_.ShaftHz();
  const double fv = spec_.VanePassHz();
  const double a1 = AccelPeak(spec_.one_x_mm_s, f1);
  const double a2 = AccelPeak(spec_.two_x_mm_s, 2.0 * f1);
  const double av = AccelPeak(spec_.vane_pass_mm_s, fv);
  const double omega_n = kTwoPi * spec_.resonance_hz;
  const double zeta = spec_.damping_ratio;
  const double omega_d = omega_n * std::sqrt(1.0 - zeta * zeta);
  for (double& sample : out) {
    const double t = static_cast<double>(index_) / fs;
    while (next_impact_s_ <= t) {
      impacts_s_.push_back(next_impact_s_);
      next_impact_s_ += NextImpactGap();
    }
    while (!impacts_s_.empty() && t - impacts_s_.front() > ring_s_) impacts_s_.pop_front();

    // Fixed phases: the lines are not in step with each other on a real machine either.
    double x = a1 * std::sin(kTwoPi * f1 * t + 0.3) + a2 * std::sin(kTwoPi * 2.0 * f1 * t + 1.1) +
               av * std::sin(kTwoPi * fv * t + 2.0);
    for (double start : impacts_s_) {
      const double tau = t - start;
      x += spec_.defect_impact_m_s2 * std::exp(-zeta * omega_n * tau) * std::sin(omega_d * tau);
    }
    x += spec_.noise_rms_m_s2 * normal_(rng_);
    sample = x;
    ++index_;
  }
}

}  // namespace spinward::daemon
