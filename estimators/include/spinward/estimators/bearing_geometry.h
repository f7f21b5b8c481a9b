// Rolling-element bearing defect frequencies: the kinematic rates at which a flaw on the outer
// race, the inner race or a rolling element is struck, as multiples of shaft speed and in Hz.
//
// A bearing is described either by its geometry (element count, element and pitch diameters,
// contact angle), from which the multiples follow by the standard kinematic formulas (Harris,
// "Rolling Bearing Analysis"), or by the four multiples directly, as bearing makers tabulate them.
// The outer race is taken as stationary and the inner race as turning with the shaft. Real bearings
// slip, so measured lines sit 1-2 % off these values: searches around them need a tolerance.
// Thread-safety: plain values and pure functions.
#pragma once

#include "spinward/estimators/result.h"

namespace spinward::estimators {

struct BearingGeometry {
  int rolling_elements = 0;        // n, at least 3
  double element_diameter = 0.0;   // d, any length unit, same as pitch_diameter
  double pitch_diameter = 0.0;     // D, greater than d
  double contact_angle_deg = 0.0;  // phi, in [0, 90)

  // Names the first bad field and its value, e.g. "rolling_elements 2 must be at least 3".
  Status Validate() const;
  bool operator==(const BearingGeometry&) const = default;
};

// Defect frequencies as multiples of the shaft rate (orders).
struct DefectMultiples {
  double ftf = 0.0;   // fundamental train (cage) frequency
  double bpfo = 0.0;  // ball pass frequency, outer race
  double bpfi = 0.0;  // ball pass frequency, inner race
  double bsf = 0.0;   // ball (element) spin frequency

  // A flaw on an element strikes both races once per spin turn.
  double BallPass() const { return 2.0 * bsf; }
  // All finite and positive, the cage slower than the shaft (ftf < 1) and bpfo < bpfi.
  Status Validate() const;
  bool operator==(const DefectMultiples&) const = default;
};

struct DefectFrequencies {
  double shaft_hz = 0.0;
  double ftf_hz = 0.0;
  double bpfo_hz = 0.0;
  double bpfi_hz = 0.0;
  double bsf_hz = 0.0;
  double ball_pass_hz = 0.0;  // 2 x bsf_hz
};

// r = (d / D) cos(phi); FTF = (1 - r) / 2; BPFO = n (1 - r) / 2; BPFI = n (1 + r) / 2;
// BSF = D / (2 d) (1 - r^2).
Result<DefectMultiples> MultiplesFromGeometry(const BearingGeometry& geometry);

// The multiples times a shaft rate; rejects a rate that is not finite and positive.
Result<DefectFrequencies> DefectFrequenciesAt(const DefectMultiples& multiples, double shaft_hz);

}  // namespace spinward::estimators
