// Machine-aware measures of one point, computed once per averaging interval next to the Hz bands:
// the shaft speed used (nominal, from the machine's tachometer point, or from the running-speed
// line of the spectrum), order bands placed at that speed, and envelope measures at the bearing's
// defect frequencies. They are added to the record as band readings, so trend storage, the alarm
// stage and every sink treat them like any other band (docs/diagnostics.md lists the names).
//
// A tachometer point publishes its speed on a SpeedBoard; the machine's other points, which run on
// their own strands, read the latest speed from it.
// Thread-safety: SpeedBoard is safe from many threads; PointDiagnostics belongs to one pipeline.
#pragma once

#include <cstdint>
#include <map>
#include <mutex>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "spinward/estimators/bearing_geometry.h"
#include "spinward/estimators/result.h"
#include "spinward/estimators/shaft_speed.h"
#include "spinward/estimators/streaming_welch.h"
#include "spinward/estimators/units.h"
#include "spinward/storage/measurement_record.h"

namespace spinward::daemon {

enum class SpeedSource { kNominal, kTachometer, kSpectrum };
std::string_view ToString(SpeedSource source);

// Measure names the diagnostics add to a record.
inline constexpr std::string_view kSpeedMeasure = "speed_rpm";
inline constexpr std::string_view kEnvelopePrefix = "env_";  // env_bpfo, env_bpfo_ratio, ...

struct EnvelopeSettings {
  double band_low_hz = 0.0;  // demodulation band; both 0: chosen by the fast kurtogram
  double band_high_hz = 0.0;
  std::size_t segment_length = 8192;  // Welch segment of the squared envelope (half overlap)
  std::size_t harmonics = 3;          // lines 1x..harmonics x each defect frequency
  double tolerance = 0.02;            // relative half-width of each line's search band (slip)
  bool operator==(const EnvelopeSettings&) const = default;
};

struct DiagnosticSettings {
  std::string machine_id;
  double nominal_shaft_hz = 0.0;  // the machine's speed_rpm / 60
  SpeedSource speed_source = SpeedSource::kNominal;
  double speed_search_fraction = 0.1;  // spectrum search: nominal +- 10 %
  // A tachometer speed older than this (against the interval's end) is not used; the spectrum
  // search, then the nominal speed, take over.
  double tachometer_stale_s = 10.0;
  bool tachometer = false;  // this point carries the machine's once-per-revolution pulses
  std::vector<estimators::OrderBandSpec> order_bands;
  std::optional<estimators::DefectMultiples> bearing;
  std::optional<EnvelopeSettings> envelope;  // needs bearing

  // True when the point computes any machine-aware measure (and so stores speed_rpm).
  bool Active() const { return tachometer || !order_bands.empty() || envelope.has_value(); }
  bool operator==(const DiagnosticSettings&) const = default;
};

// The latest tachometer speed of each machine.
class SpeedBoard {
 public:
  struct Reading {
    double shaft_hz = 0.0;
    std::int64_t time_ns = 0;  // end of the interval it was measured over
  };
  void Publish(const std::string& machine_id, Reading reading);
  std::optional<Reading> Latest(const std::string& machine_id) const;
  // The daemon's board, shared by all pipelines of the process.
  static SpeedBoard& Shared();

 private:
  mutable std::mutex mutex_;
  std::map<std::string, Reading, std::less<>> latest_;
};

class PointDiagnostics {
 public:
  PointDiagnostics(DiagnosticSettings settings, double sample_rate_hz, estimators::Unit sample_unit,
                   SpeedBoard* board);

  // The interval's (scaled) samples, in order.
  void Add(std::span<const double> samples);
  // Drops the samples collected so far (a gap: the next interval starts afresh).
  void Reset() { samples_.clear(); }

  // The interval's measures from its samples and its averaged spectrum; clears the samples. A
  // measure that cannot be computed (too few samples, no pulses) is NaN: storage skips it.
  std::vector<storage::BandReading> Measure(const estimators::AveragedSpectrum& spectrum,
                                            std::int64_t interval_end_ns);

  const DiagnosticSettings& settings() const { return settings_; }

 private:
  struct Speed {
    double shaft_hz = 0.0;
    SpeedSource source = SpeedSource::kNominal;
  };
  Speed CurrentSpeed(const estimators::AveragedSpectrum& spectrum, std::int64_t end_ns) const;
  void AddEnvelopeMeasures(double shaft_hz, std::vector<storage::BandReading>& out);

  DiagnosticSettings settings_;
  double sample_rate_hz_;
  estimators::Unit sample_unit_;
  SpeedBoard* board_;
  std::vector<double> samples_;
  // The demodulation band the kurtogram chose (when the settings give none); kept for the life of
  // the pipeline, so successive values compare like with like.
  double chosen_low_hz_ = 0.0;
  double chosen_high_hz_ = 0.0;
};

}  // namespace spinward::daemon
