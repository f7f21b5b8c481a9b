#include "spinward/daemon/alarm_rule.h"

#include <cmath>
#include <cstdio>
#include <string>

namespace spinward::daemon {
namespace {

std::string Num(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%g", value);
  return buffer;
}

Status Bad(const AlarmRule& rule, const std::string& problem) {
  return Status::Fail("alarm rule " + rule.point_id + "/" + rule.measure + ": " + problem);
}

}  // namespace

double AlarmRule::DeadbandFor(double setpoint) const {
  if (deadband_kind == DeadbandKind::kAbsolute) return deadband;
  return std::fabs(setpoint) * deadband / 100.0;
}

Status AlarmRule::Validate() const {
  if (point_id.empty()) return Bad(*this, "point_id is empty");
  if (measure.empty()) return Bad(*this, "measure is empty");
  if (!std::isfinite(high_alert)) return Bad(*this, "high_alert is not finite: " + Num(high_alert));
  if (!std::isfinite(high_danger)) {
    return Bad(*this, "high_danger is not finite: " + Num(high_danger));
  }
  if (high_alert >= high_danger) {
    return Bad(*this, "high_alert (" + Num(high_alert) + ") must be below high_danger (" +
                          Num(high_danger) + ")");
  }
  if (low_alert && !std::isfinite(*low_alert)) {
    return Bad(*this, "low_alert is not finite: " + Num(*low_alert));
  }
  if (low_danger && !std::isfinite(*low_danger)) {
    return Bad(*this, "low_danger is not finite: " + Num(*low_danger));
  }
  if (low_alert && low_danger && *low_danger >= *low_alert) {
    return Bad(*this, "low_danger (" + Num(*low_danger) + ") must be below low_alert (" +
                          Num(*low_alert) + ")");
  }
  if (!std::isfinite(deadband) || deadband < 0.0) {
    return Bad(*this, "deadband must be zero or positive, got " + Num(deadband));
  }
  if (deadband_kind == DeadbandKind::kPercent && deadband >= 50.0) {
    return Bad(*this, "deadband of " + Num(deadband) + " % is too wide (must be below 50 %)");
  }
  // The reset bands of the low and high alert must not overlap, or a value could hold both.
  std::optional<double> lowest_low = low_alert ? low_alert : low_danger;
  if (lowest_low) {
    const char* low_name = low_alert ? "low_alert" : "low_danger";
    if (*lowest_low >= high_alert) {
      return Bad(*this, std::string(low_name) + " (" + Num(*lowest_low) +
                            ") must be below high_alert (" + Num(high_alert) + ")");
    }
    double low_reset = *lowest_low + DeadbandFor(*lowest_low);
    double high_reset = high_alert - DeadbandFor(high_alert);
    if (low_reset >= high_reset) {
      return Bad(*this, "deadband " + Num(deadband) + " makes the reset level of " + low_name +
                            " (" + Num(low_reset) + ") reach that of high_alert (" +
                            Num(high_reset) + ")");
    }
  }
  if (on_delay_n < 1)
    return Bad(*this, "on_delay_n must be at least 1, got " + std::to_string(on_delay_n));
  if (on_delay_m < on_delay_n) {
    return Bad(*this, "on_delay_n (" + std::to_string(on_delay_n) +
                          ") must not exceed on_delay_m (" + std::to_string(on_delay_m) + ")");
  }
  if (on_delay_m > kMaxOnDelayWindow) {
    return Bad(*this, "on_delay_m must be at most " + std::to_string(kMaxOnDelayWindow) + ", got " +
                          std::to_string(on_delay_m));
  }
  if (off_delay_intervals < 1) {
    return Bad(*this, "off_delay_intervals must be at least 1 (1 clears at once), got " +
                          std::to_string(off_delay_intervals));
  }
  if (stale_after_ns < 0) {
    return Bad(*this, "stale_after_ns must be zero (off) or positive, got " +
                          std::to_string(stale_after_ns));
  }
  return Status::Ok();
}

}  // namespace spinward::daemon
