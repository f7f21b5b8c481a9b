#include "spinward/daemon/sensor_health.h"

#include <cmath>
#include <cstdio>
#include <string>

namespace spinward::daemon {
namespace {

std::string Num(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.4g", value);
  return buffer;
}

Status BadWindow(const char* name, const ValueWindow& window) {
  if (!std::isfinite(window.low) || !std::isfinite(window.high) || window.low >= window.high) {
    return Status::Fail(std::string("sensor health: ") + name + " low (" + Num(window.low) +
                        ") must be finite and below high (" + Num(window.high) + ")");
  }
  return Status::Ok();
}

}  // namespace

Status SensorHealthOptions::Validate() const {
  if (full_scale && (!std::isfinite(*full_scale) || *full_scale <= 0.0)) {
    return Status::Fail("sensor health: full_scale must be positive, got " + Num(*full_scale));
  }
  if (!(clip_margin >= 0.0 && clip_margin < 0.5)) {
    return Status::Fail("sensor health: clip_margin must be in [0, 0.5), got " + Num(clip_margin));
  }
  if (clip_count_limit < 1)
    return Status::Fail("sensor health: clip_count_limit must be at least 1, got 0");
  if (clip_fraction_limit && !(*clip_fraction_limit > 0.0 && *clip_fraction_limit <= 1.0)) {
    return Status::Fail("sensor health: clip_fraction_limit must be in (0, 1], got " +
                        Num(*clip_fraction_limit));
  }
  if (noise_floor_rms && !(std::isfinite(*noise_floor_rms) && *noise_floor_rms >= 0.0)) {
    return Status::Fail("sensor health: noise_floor_rms must be zero or positive, got " +
                        Num(*noise_floor_rms));
  }
  if (identical_run_limit < 2) {
    return Status::Fail("sensor health: identical_run_limit must be at least 2, got " +
                        std::to_string(identical_run_limit));
  }
  if (bias_volts_window) {
    if (Status status = BadWindow("bias_volts_window", *bias_volts_window); !status) return status;
  }
  if (mean_window) {
    if (Status status = BadWindow("mean_window", *mean_window); !status) return status;
  }
  return Status::Ok();
}

bool SensorHealthVerdict::Has(SensorCheck check) const {
  for (const auto& finding : findings) {
    if (finding.check == check) return true;
  }
  return false;
}

std::string SensorHealthVerdict::Reason() const {
  std::string reason;
  for (const auto& finding : findings) {
    if (!reason.empty()) reason += "; ";
    reason += ToString(finding.check);
    reason += ": ";
    reason += finding.detail;
  }
  return reason;
}

const char* ToString(SensorCheck check) {
  switch (check) {
    case SensorCheck::kFlatline:
      return "flatline";
    case SensorCheck::kClipping:
      return "clipping";
    case SensorCheck::kBias:
      return "bias";
    case SensorCheck::kDropout:
      return "dropout";
  }
  return "unknown";
}

SensorHealthVerdict CheckSensorHealth(const SensorHealthOptions& options,
                                      const estimators::OverallIndicators& indicators,
                                      const SensorCounters& counters) {
  SensorHealthVerdict verdict;
  auto add = [&](SensorCheck check, std::string detail) {
    verdict.findings.push_back({check, std::move(detail)});
  };

  // Dropouts first: with no samples the other checks have nothing to look at.
  if (indicators.count == 0) {
    add(SensorCheck::kDropout, "no samples in the interval");
    return verdict;
  }
  if (counters.sequence_gaps > options.max_sequence_gaps) {
    add(SensorCheck::kDropout, std::to_string(counters.sequence_gaps) +
                                   " sequence gap(s) in the interval (limit " +
                                   std::to_string(options.max_sequence_gaps) + ")");
  }
  if (counters.missing_intervals > options.max_missing_intervals) {
    add(SensorCheck::kDropout, std::to_string(counters.missing_intervals) +
                                   " interval(s) missing before this one (limit " +
                                   std::to_string(options.max_missing_intervals) + ")");
  }

  // Flatline: a disconnected or dead sensor reads a constant or only the channel's noise.
  if (indicators.count >= 2 && indicators.max == indicators.min) {
    add(SensorCheck::kFlatline,
        "all " + std::to_string(indicators.count) + " samples equal " + Num(indicators.max));
  } else if (options.noise_floor_rms && indicators.rms <= *options.noise_floor_rms) {
    add(SensorCheck::kFlatline, "RMS " + Num(indicators.rms) + " at or below the noise floor " +
                                    Num(*options.noise_floor_rms));
  } else if (counters.longest_identical_run &&
             *counters.longest_identical_run >= options.identical_run_limit) {
    add(SensorCheck::kFlatline, std::to_string(*counters.longest_identical_run) +
                                    " identical samples in a row (limit " +
                                    std::to_string(options.identical_run_limit) + ")");
  }

  // Clipping: a saturated chain flattens peaks, so RMS reads low and crest factor lies.
  if (options.full_scale) {
    const double level = options.ClipLevel();
    if (counters.clipped_samples) {
      const std::size_t clipped = *counters.clipped_samples;
      const double fraction = static_cast<double>(clipped) / static_cast<double>(indicators.count);
      if (clipped >= options.clip_count_limit ||
          (options.clip_fraction_limit && fraction >= *options.clip_fraction_limit)) {
        add(SensorCheck::kClipping,
            std::to_string(clipped) + " of " + std::to_string(indicators.count) +
                " samples at full scale " + Num(*options.full_scale) + " (limit " +
                std::to_string(options.clip_count_limit) + " samples)");
      }
    } else if (indicators.max >= level || indicators.min <= -level) {
      // Without the pipeline's count, reaching the rail at all is the only evidence there is.
      add(SensorCheck::kClipping, "samples reach full scale " + Num(*options.full_scale) +
                                      " (min " + Num(indicators.min) + ", max " +
                                      Num(indicators.max) + ")");
    }
  }

  // Bias: an IEPE sensor's bias voltage says whether the sensor and cable are alive.
  if (options.bias_volts_window && counters.bias_volts) {
    const ValueWindow& window = *options.bias_volts_window;
    const double volts = *counters.bias_volts;
    if (!(volts >= window.low && volts <= window.high)) {
      add(SensorCheck::kBias,
          "bias " + Num(volts) + " V outside " + Num(window.low) + ".." + Num(window.high) + " V");
    }
  }
  if (options.mean_window) {
    const ValueWindow& window = *options.mean_window;
    if (!(indicators.mean >= window.low && indicators.mean <= window.high)) {
      add(SensorCheck::kBias,
          "mean " + Num(indicators.mean) + " outside " + Num(window.low) + ".." + Num(window.high));
    }
  }
  return verdict;
}

void FlagRecord(const SensorHealthVerdict& verdict, storage::MeasurementRecord& record) {
  record.sensor_fault = !verdict.ok();
  record.sensor_fault_reason = verdict.Reason();
}

}  // namespace spinward::daemon
