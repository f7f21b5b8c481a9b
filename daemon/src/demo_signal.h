// A synthetic accelerometer signal of the demo's invented pump: the Larkfield booster station's
// P-101 (drive-end bearing, radial), used by `spinward demo` and meant for a later `feed` command.
//
// What it holds, all in m/s^2: shaft-rate (1x) and 2x lines from unbalance and misalignment; the
// vane-pass line (vanes x shaft rate); a developing outer-race defect of the rolling-element
// bearing, as one impact per ball pass (BPFO, Harris's kinematic formula for the invented bearing
// below, with a little random slip as real bearings show) each ringing down a structural resonance;
// and white Gaussian noise. Line amplitudes are stated as velocity (mm/s peak), as the trade reads
// them, and converted to acceleration at their frequency.
// The generator keeps its phase, so consecutive Generate calls form one continuous signal; the same
// spec and seed give the same samples.
// Thread-safety: one generator per thread.
#pragma once

#include <cstddef>
#include <cstdint>
#include <deque>
#include <random>
#include <span>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

struct PumpSignalSpec {
  double sample_rate_hz = 25600.0;
  double shaft_rpm = 1480.0;
  double one_x_mm_s = 2.2;  // velocity peak of the 1x line
  double two_x_mm_s = 0.9;  // velocity peak of the 2x line
  int vane_count = 7;
  double vane_pass_mm_s = 0.8;  // velocity peak of the vane-pass line
  // The drive-end bearing (invented geometry): balls, ball and pitch diameters, contact angle.
  int rolling_elements = 9;
  double ball_diameter_mm = 12.7;
  double pitch_diameter_mm = 65.0;
  double contact_angle_deg = 0.0;
  double defect_impact_m_s2 = 6.0;  // peak of one impact's ringing
  double resonance_hz = 3400.0;
  double damping_ratio = 0.04;
  double slip = 0.01;  // random spread of the impact spacing, as a fraction
  double noise_rms_m_s2 = 0.08;
  std::uint64_t seed = 101;

  double ShaftHz() const { return shaft_rpm / 60.0; }
  double VanePassHz() const { return vane_count * ShaftHz(); }
  // Ball pass frequency, outer race: n fr / 2 (1 - d/D cos phi) (Harris, Rolling Bearing Analysis).
  double BpfoHz() const;
  Status Validate() const;
};

class PumpSignalGenerator {
 public:
  static Result<PumpSignalGenerator> Create(const PumpSignalSpec& spec);

  // Fills `out` with the next samples, in m/s^2.
  void Generate(std::span<double> out);
  std::uint64_t samples_generated() const { return index_; }
  const PumpSignalSpec& spec() const { return spec_; }

 private:
  explicit PumpSignalGenerator(const PumpSignalSpec& spec);
  double NextImpactGap();

  PumpSignalSpec spec_;
  std::mt19937_64 rng_;
  std::normal_distribution<double> normal_{0.0, 1.0};
  std::uint64_t index_ = 0;
  double next_impact_s_ = 0.0;
  std::deque<double> impacts_s_;  // start times of impacts still ringing
  double ring_s_ = 0.0;           // after this long an impact has decayed below 1e-5 of its peak
};

}  // namespace spinward::daemon
