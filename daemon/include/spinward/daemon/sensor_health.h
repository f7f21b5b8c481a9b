// Sensor checks for one interval, kept apart from machine alarms: a dead, saturated or badly
// biased sensor can fake a machine alarm or hide a real one, so a point whose sensor fails these
// checks gets a sensor-fault alarm, no machine alarm, and its values are flagged so that storage
// keeps them out of baselines and roll-ups.
// Checks: flatline (RMS at the noise floor, all samples equal, or a long run of identical samples),
// clipping (samples at full scale), DC bias out of its window (the accelerometer's bias voltage
// when the raw volts are known, or the mean in engineering units), dropouts (no samples, sequence
// gaps and missing intervals counted by the pipeline). Inputs are the interval's indicators and the
// pipeline's counters; nothing here reads samples, a clock or a file.
// Thread-safety: plain values and pure functions.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "spinward/estimators/overall_indicators.h"
#include "spinward/estimators/result.h"
#include "spinward/storage/measurement_record.h"

namespace spinward::daemon {

struct ValueWindow {
  double low = 0.0;
  double high = 0.0;
};

struct SensorHealthOptions {
  // Full scale of the acquisition chain in the sample unit; unset turns the clipping check off.
  std::optional<double> full_scale;
  // A sample within this fraction of full scale counts as clipped (converters and scaling rarely
  // land exactly on the rail). Common practice, no source.
  double clip_margin = 0.005;
  // Clipping when at least this many samples sit at full scale... (common practice, no source)
  std::size_t clip_count_limit = 3;
  // ...or when at least this fraction of the interval's samples does (unset: count only).
  std::optional<double> clip_fraction_limit;

  // Flatline when the AC RMS is at or below this floor (sensor or channel noise floor, sample
  // unit); unset checks only for all-equal samples.
  std::optional<double> noise_floor_rms;
  // Flatline when the pipeline saw this many identical consecutive samples. Common practice, no
  // source: real vibration on a 16-bit or finer converter does not repeat this often.
  std::size_t identical_run_limit = 100;

  // Accelerometer (IEPE) bias voltage window, volts; checked only when the pipeline knows the
  // raw bias. Unset turns the check off.
  std::optional<ValueWindow> bias_volts_window;
  // Window for the interval mean in the sample unit (a DC-coupled channel's offset); unset: off.
  std::optional<ValueWindow> mean_window;

  // Dropouts: more gaps than these in one interval fault the sensor. A lost frame corrupts the
  // interval's spectrum, so by default any gap does; a missing interval or two is a link hiccup.
  // Common practice, no source.
  std::size_t max_sequence_gaps = 0;
  std::size_t max_missing_intervals = 2;

  Status Validate() const;
  // The level at or above which the pipeline should count a sample as clipped.
  double ClipLevel() const { return full_scale ? *full_scale * (1.0 - clip_margin) : 0.0; }
};

// What the pipeline counted over the interval, beyond the indicators. Unset means not counted.
struct SensorCounters {
  std::optional<std::size_t> clipped_samples;        // |x| >= SensorHealthOptions::ClipLevel()
  std::optional<std::size_t> longest_identical_run;  // longest run of equal consecutive samples
  std::optional<double> bias_volts;                  // raw IEPE bias, when the source reports it
  std::size_t sequence_gaps = 0;                     // frames lost inside the interval
  std::size_t missing_intervals = 0;                 // intervals lost since the previous one
};

enum class SensorCheck { kFlatline, kClipping, kBias, kDropout };

struct SensorFinding {
  SensorCheck check = SensorCheck::kFlatline;
  std::string detail;  // factual, with the measured value and the threshold
};

// Healthy when it has no findings; a default-constructed verdict is healthy.
struct SensorHealthVerdict {
  std::vector<SensorFinding> findings;

  bool ok() const { return findings.empty(); }
  bool Has(SensorCheck check) const;
  // All findings joined by "; ", empty when healthy.
  std::string Reason() const;
};

// "flatline", "clipping", "bias", "dropout".
const char* ToString(SensorCheck check);

// Runs every configured check; `options` must have passed Validate().
SensorHealthVerdict CheckSensorHealth(const SensorHealthOptions& options,
                                      const estimators::OverallIndicators& indicators,
                                      const SensorCounters& counters);

// Marks a record whose sensor failed, so storage keeps it out of baselines and roll-ups.
void FlagRecord(const SensorHealthVerdict& verdict, storage::MeasurementRecord& record);

}  // namespace spinward::daemon
