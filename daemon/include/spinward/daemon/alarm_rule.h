// The alarm rule of one (point, measure): its setpoints and how eagerly it raises and clears.
// A measure is a band name ("velocity_rms_10_1000") or an indicator ("rms", "crest_factor",
// "kurtosis"). High limits are required, low limits optional (a fan whose belt broke goes quiet).
// Deadband, on-delay and off-delay follow alarm-management practice (ISA-18.2 / IEC 62682): a
// deadband keeps a value that hovers at a setpoint from chattering, the on-delay (N of the last M
// intervals) ignores single spikes, the off-delay waits for the value to stay down before clearing.
// Owned by value; AlarmRule::Validate names the first bad field and its value.
// Thread-safety: a plain value.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

enum class DeadbandKind {
  kAbsolute,  // in the measure's unit
  kPercent,   // percent of each setpoint's magnitude
};

struct AlarmRule {
  // The longest on-delay window kept (and persisted) per alarm.
  static constexpr int kMaxOnDelayWindow = 64;

  std::string point_id;
  std::string measure;
  std::string unit;  // for messages only, e.g. "mm/s"

  double high_alert = 0.0;
  double high_danger = 0.0;
  std::optional<double> low_alert;   // value at or below raises alert
  std::optional<double> low_danger;  // value at or below raises danger

  // Default 5 % of the setpoint: the top of the few-percent range alarm-management guides give
  // for noisy process signals (common practice, from memory); vibration values are noisy.
  DeadbandKind deadband_kind = DeadbandKind::kPercent;
  double deadband = 5.0;

  // Raise when at least on_delay_n of the last on_delay_m intervals are at or beyond the setpoint.
  int on_delay_n = 1;
  int on_delay_m = 1;
  // Clear (or step down) after this many consecutive intervals past the reset level; 1 = at once.
  int off_delay_intervals = 1;
  // A latched alarm stays raised after the value returns until someone acknowledges it.
  bool latching = false;
  // No interval for this long makes the alarm stale; 0 turns the check off.
  std::int64_t stale_after_ns = 0;

  Status Validate() const;

  // The deadband in the measure's unit for a given setpoint.
  double DeadbandFor(double setpoint) const;
};

}  // namespace spinward::daemon
