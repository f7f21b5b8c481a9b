// One measurement point's result for one averaging interval: the unit of everything downstream of the
// channel pipeline (sinks, trend storage, alarms, messaging). Produced by the daemon's pipeline,
// stored by storage/, published by messaging. Times are UTC nanoseconds since the Unix epoch, taken
// from the samples' own timestamps (the acquisition box's clock), not from the daemon's clock.
// Thread-safety: a plain value.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "spinward/estimators/overall_indicators.h"
#include "spinward/estimators/streaming_welch.h"

namespace spinward::storage {

struct BandReading {
  std::string name;      // e.g. "velocity_rms_10_1000"
  std::string unit;      // e.g. "mm/s"
  double lo_hz = 0.0;
  double hi_hz = 0.0;
  double rms = 0.0;      // in `unit`
};

struct MeasurementRecord {
  std::string point_id;
  std::int64_t interval_start_ns = 0;  // time of the interval's first sample
  std::int64_t interval_end_ns = 0;    // time just after its last sample
  std::size_t segment_count = 0;
  std::string sample_unit;             // engineering unit of the samples, e.g. "m/s^2" or "g"
  estimators::OverallIndicators indicators;  // in sample_unit
  std::vector<BandReading> bands;
  estimators::AveragedSpectrum spectrum;     // density of the samples, sample_unit^2/Hz
  // Facts for the sensor checks, counted by the pipeline over this interval's samples.
  std::size_t clipped_samples = 0;        // at or beyond the point's clip level (0 when none is set)
  std::size_t longest_identical_run = 0;  // longest run of equal consecutive samples
  std::size_t sequence_gaps = 0;          // frames lost (or rejected) inside the interval
  bool sensor_fault = false;           // set when the sensor checks failed: kept out of baselines
  std::string sensor_fault_reason;     // empty unless sensor_fault
};

}  // namespace spinward::storage
