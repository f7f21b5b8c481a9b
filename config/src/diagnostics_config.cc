#include "spinward/config/diagnostics_config.h"

#include "spinward/config/site_config.h"

namespace spinward::config {

Result<SpeedSourceKind> ParseSpeedSource(std::string_view text) {
  if (text == "nominal") return SpeedSourceKind::kNominal;
  if (text == "tachometer") return SpeedSourceKind::kTachometer;
  if (text == "spectrum") return SpeedSourceKind::kSpectrum;
  return Error{"unknown speed source '" + std::string(text) +
               "' (known: nominal, tachometer, spectrum)"};
}

std::string_view ToString(SpeedSourceKind value) {
  switch (value) {
    case SpeedSourceKind::kNominal:
      return "nominal";
    case SpeedSourceKind::kTachometer:
      return "tachometer";
    case SpeedSourceKind::kSpectrum:
      return "spectrum";
  }
  return "unknown";
}

std::string EnvelopeEnergyUnit(estimators::Unit sample_unit) {
  std::string text(estimators::ToString(sample_unit));
  if (text.find_first_of("^/") != std::string::npos) return "(" + text + ")^2";
  return text + "^2";
}

std::vector<std::string> DiagnosticMeasureNames(const PointConfig& point) {
  std::vector<std::string> names;
  const PointDiagnosticsConfig& d = point.diagnostics;
  if (!d.tachometer && d.order_bands.empty() && !d.envelope) return names;
  names.emplace_back(kSpeedMeasureName);
  if (d.tachometer) return names;  // a pulse channel gives its speed only
  for (const auto& band : d.order_bands) names.push_back(band.name);
  if (d.envelope) {
    for (std::string_view name : kEnvelopeMeasures) names.emplace_back(name);
  }
  return names;
}

std::optional<std::string> DiagnosticMeasureUnit(const PointConfig& point, std::string_view name) {
  bool known = false;
  for (const auto& candidate : DiagnosticMeasureNames(point)) known = known || candidate == name;
  if (!known) return std::nullopt;
  if (name == kSpeedMeasureName) return std::string("rpm");
  for (const auto& band : point.diagnostics.order_bands) {
    if (band.name == name) return std::string(estimators::ToString(band.unit));
  }
  if (name.ends_with("_ratio")) return std::string();
  return EnvelopeEnergyUnit(point.unit);
}

}  // namespace spinward::config
