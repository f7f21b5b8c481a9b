// The machine-aware parts of the site model (docs/diagnostics.md, docs/configuration.md): per
// machine its bearing, vane or blade count and where its shaft speed comes from; per point its
// order bands, envelope measures, and whether it carries the machine's tachometer pulses.
// Thread-safety: plain values.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/bearing_geometry.h"
#include "spinward/estimators/result.h"
#include "spinward/estimators/shaft_speed.h"
#include "spinward/estimators/units.h"

namespace spinward::config {

enum class SpeedSourceKind { kNominal, kTachometer, kSpectrum };
Result<SpeedSourceKind> ParseSpeedSource(std::string_view text);  // nominal tachometer spectrum
std::string_view ToString(SpeedSourceKind value);

struct MachineDiagnosticsConfig {
  // The bearing as configured: by geometry (kept for display) or by its four multiples; `bearing`
  // holds the multiples either way.
  std::optional<estimators::BearingGeometry> bearing_geometry;
  std::optional<estimators::DefectMultiples> bearing;
  int vanes = 0;  // vane or blade count; 0: none given (no vane-pass order)
  SpeedSourceKind speed_source = SpeedSourceKind::kNominal;
  double speed_search_percent = 10.0;  // spectrum search: nominal speed +- this percentage
  bool operator==(const MachineDiagnosticsConfig&) const = default;
};

struct EnvelopeConfig {
  double lo_hz = 0.0;  // demodulation band; both absent: chosen by the fast kurtogram
  double hi_hz = 0.0;
  std::size_t segment = 8192;  // Welch segment of the squared envelope, samples
  std::size_t harmonics = 3;
  double tolerance_percent = 2.0;  // slip: each line is sought within +- this percentage
  bool operator==(const EnvelopeConfig&) const = default;
};

struct PointDiagnosticsConfig {
  bool tachometer = false;  // the point carries once-per-revolution pulses, not vibration
  std::vector<estimators::OrderBandSpec> order_bands;
  std::optional<EnvelopeConfig> envelope;
  bool operator==(const PointDiagnosticsConfig&) const = default;
};

// The measures an envelope block adds to its point: env_<line> (RMS of the squared envelope's
// lines) and env_<line>_ratio (their power over the envelope spectrum's median level).
inline constexpr std::string_view kEnvelopeMeasures[] = {
    "env_bpfo", "env_bpfo_ratio", "env_bpfi", "env_bpfi_ratio",
    "env_bsf",  "env_bsf_ratio",  "env_ftf",  "env_ftf_ratio"};
inline constexpr std::string_view kSpeedMeasureName = "speed_rpm";

struct PointConfig;
// The machine-aware measures a point's records carry, in record order: speed_rpm (when any is
// configured), its order bands, its envelope measures.
std::vector<std::string> DiagnosticMeasureNames(const PointConfig& point);
// The unit text of one of those measures ("rpm", an order band's unit, EnvelopeEnergyUnit, "" for
// the ratios); none when the point has no such measure.
std::optional<std::string> DiagnosticMeasureUnit(const PointConfig& point, std::string_view name);
// The unit of a squared envelope line's RMS: "g" -> "g^2", "m/s^2" -> "(m/s^2)^2".
std::string EnvelopeEnergyUnit(estimators::Unit sample_unit);

}  // namespace spinward::config
