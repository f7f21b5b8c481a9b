#include "diagnostics_loader.h"

#include <array>
#include <map>
#include <sstream>

namespace spinward::config::internal {
namespace {

constexpr std::array<std::string_view, 8> kBearingKeys{"rolling_elements",
                                                       "element_diameter",
                                                       "pitch_diameter",
                                                       "contact_angle_deg",
                                                       "ftf",
                                                       "bpfo",
                                                       "bpfi",
                                                       "bsf"};
constexpr std::array<std::string_view, 7> kOrderBandKeys{
    "name", "order", "half_width", "lo_order", "hi_order", "quantity", "units"};
constexpr std::array<std::string_view, 5> kEnvelopeKeys{"lo_hz", "hi_hz", "segment", "harmonics",
                                                        "tolerance_percent"};
// An order band given by its centre spans +- this many orders unless half_width says otherwise:
// common practice, no source.
constexpr double kDefaultHalfWidth = 0.1;

std::string Num(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

std::string Indexed(std::string_view list, std::size_t index) {
  return std::string(list) + "[" + std::to_string(index) + "]";
}

void ReadBearing(ProblemList& problems, MapReader& machine_entry, MachineDiagnosticsConfig& out) {
  const YAML::Node* node = machine_entry.Find("bearing");
  if (node == nullptr) return;
  MapReader entry(problems, *node, machine_entry.KeyPath("bearing"), kBearingKeys);
  if (!entry.is_map()) return;
  const bool by_geometry = entry.Has("rolling_elements") || entry.Has("element_diameter") ||
                           entry.Has("pitch_diameter") || entry.Has("contact_angle_deg");
  const bool by_multiples =
      entry.Has("ftf") || entry.Has("bpfo") || entry.Has("bpfi") || entry.Has("bsf");
  if (by_geometry && by_multiples) {
    problems.Add(entry.mark(), entry.path(),
                 "give the bearing by geometry (rolling_elements, element_diameter, "
                 "pitch_diameter, contact_angle_deg) or by its multiples (ftf, bpfo, bpfi, bsf), "
                 "not both");
    return;
  }
  if (!by_geometry && !by_multiples) {
    problems.Add(entry.mark(), entry.path(),
                 "the bearing needs its geometry (rolling_elements, element_diameter, "
                 "pitch_diameter, contact_angle_deg) or its multiples (ftf, bpfo, bpfi, bsf)");
    return;
  }
  if (by_geometry) {
    estimators::BearingGeometry geometry;
    long long elements = 0;
    bool ok = entry.ReadInteger("rolling_elements", elements, Need::kRequired);
    if (ok && (elements < 3 || elements > 1000)) {
      entry.Report("rolling_elements",
                   "must be between 3 and 1000, got " + std::to_string(elements));
      ok = false;
    }
    geometry.rolling_elements = static_cast<int>(ok ? elements : 0);
    ok = entry.ReadNumber("element_diameter", geometry.element_diameter, Need::kRequired) && ok;
    ok = entry.ReadNumber("pitch_diameter", geometry.pitch_diameter, Need::kRequired) && ok;
    ok = (!entry.Has("contact_angle_deg") ||
          entry.ReadNumber("contact_angle_deg", geometry.contact_angle_deg, Need::kOptional)) &&
         ok;
    if (!ok) return;
    auto multiples = estimators::MultiplesFromGeometry(geometry);
    if (!multiples.ok()) {
      const std::string& message = multiples.message();
      std::string key = message.substr(0, message.find(' '));
      if (entry.Has(key)) {
        entry.Report(key, message);
      } else {
        problems.Add(entry.mark(), entry.path(), message);
      }
      return;
    }
    out.bearing_geometry = geometry;
    out.bearing = *multiples;
    return;
  }
  estimators::DefectMultiples multiples;
  bool ok = entry.ReadNumber("ftf", multiples.ftf, Need::kRequired);
  ok = entry.ReadNumber("bpfo", multiples.bpfo, Need::kRequired) && ok;
  ok = entry.ReadNumber("bpfi", multiples.bpfi, Need::kRequired) && ok;
  ok = entry.ReadNumber("bsf", multiples.bsf, Need::kRequired) && ok;
  if (!ok) return;
  if (Status valid = multiples.Validate(); !valid.ok()) {
    const std::string& message = valid.message();
    entry.Report(message.substr(0, message.find(' ')), message);
    return;
  }
  out.bearing = multiples;
}

void ReadOrderBands(ProblemList& problems, MapReader& point_entry, PointConfig& point,
                    const MachineConfig* machine, std::map<std::string, int, std::less<>>& names) {
  auto items = point_entry.ReadList("order_bands", Need::kOptional);
  for (std::size_t k = 0; k < items.size(); ++k) {
    MapReader entry(problems, items[k], point_entry.KeyPath(Indexed("order_bands", k)),
                    kOrderBandKeys);
    if (!entry.is_map()) continue;
    estimators::OrderBandSpec band;
    if (entry.ReadString("name", band.name, Need::kRequired)) {
      auto [it, inserted] = names.emplace(band.name, entry.ValueMark("name").line + 1);
      if (!inserted) {
        entry.Report("name", "order band name " + QuoteValue(band.name) +
                                 " is already the name of a band or measure of this point");
      }
    }
    const bool by_centre = entry.Has("order");
    const bool by_range = entry.Has("lo_order") || entry.Has("hi_order");
    bool ok = true;
    if (by_centre == by_range) {
      problems.Add(entry.mark(), entry.path(),
                   by_centre ? "give order (with half_width) or lo_order and hi_order, not both"
                             : "give order (a multiple of shaft speed, or vane_pass) or lo_order "
                               "and hi_order");
      ok = false;
    } else if (by_centre) {
      std::string text;
      double centre = 0.0;
      if (!entry.ReadString("order", text, Need::kRequired)) {
        ok = false;
      } else if (text == "vane_pass" || text == "blade_pass") {
        if (machine == nullptr || machine->diagnostics.vanes <= 0) {
          entry.Report("order", "order " + text +
                                    " needs the machine's vanes (the vane or blade "
                                    "count)");
          ok = false;
        } else {
          centre = machine->diagnostics.vanes;
        }
      } else if (auto number = ParseFiniteNumber(text); number && *number > 0.0) {
        centre = *number;
      } else {
        entry.Report("order", "expected a positive multiple of shaft speed or vane_pass, got " +
                                  QuoteValue(text));
        ok = false;
      }
      double half = kDefaultHalfWidth;
      if (entry.ReadNumber("half_width", half, Need::kOptional) && !(half > 0.0)) {
        entry.Report("half_width", "must be above 0 orders, got " + Num(half));
        ok = false;
      }
      if (ok && half >= centre) {
        entry.Report("half_width",
                     "half_width " + Num(half) + " must be below the order " + Num(centre));
        ok = false;
      }
      band.lo_order = centre - half;
      band.hi_order = centre + half;
    } else {
      if (entry.Has("half_width")) {
        entry.Report("half_width", "applies to order only, not to lo_order and hi_order");
      }
      ok = entry.ReadNumber("lo_order", band.lo_order, Need::kRequired) && ok;
      ok = entry.ReadNumber("hi_order", band.hi_order, Need::kRequired) && ok;
      if (ok && band.lo_order < 0.0) {
        entry.Report("lo_order", "must not be negative, got " + Num(band.lo_order));
        ok = false;
      } else if (ok && band.hi_order <= band.lo_order) {
        entry.Report("hi_order", "hi_order " + Num(band.hi_order) + " must be above lo_order " +
                                     Num(band.lo_order));
        ok = false;
      }
    }
    estimators::Quantity quantity = estimators::Quantity::kVelocity;
    entry.ReadParsed("quantity", quantity, Need::kOptional, estimators::ParseQuantity);
    band.unit = estimators::DefaultUnit(quantity);
    estimators::Unit unit = band.unit;
    if (entry.ReadParsed("units", unit, Need::kOptional, estimators::ParseUnit)) {
      if (estimators::QuantityOf(unit) != quantity) {
        entry.Report("units", "units " + std::string(estimators::ToString(unit)) + " measure " +
                                  std::string(estimators::ToString(estimators::QuantityOf(unit))) +
                                  ", not " + std::string(estimators::ToString(quantity)));
      } else {
        band.unit = unit;
      }
    }
    if (ok) point.diagnostics.order_bands.push_back(std::move(band));
  }
}

void ReadEnvelope(ProblemList& problems, MapReader& point_entry, PointConfig& point,
                  const MachineConfig* machine, bool rate_ok) {
  const YAML::Node* node = point_entry.Find("envelope");
  if (node == nullptr) return;
  MapReader entry(problems, *node, point_entry.KeyPath("envelope"), kEnvelopeKeys);
  if (!entry.is_map()) return;
  EnvelopeConfig envelope;
  bool ok = true;
  if (machine != nullptr && !machine->diagnostics.bearing) {
    problems.Add(entry.mark(), entry.path(),
                 "envelope measures need the bearing of machine " + QuoteValue(machine->id) +
                     " (machines[].bearing)");
    ok = false;
  }
  if (entry.Has("lo_hz") != entry.Has("hi_hz")) {
    problems.Add(
        entry.mark(), entry.path(),
        "give both lo_hz and hi_hz, or neither (the fast kurtogram then chooses the band)");
    ok = false;
  }
  if (entry.Has("lo_hz") && entry.Has("hi_hz")) {
    bool numbers = entry.ReadNumber("lo_hz", envelope.lo_hz, Need::kRequired);
    numbers = entry.ReadNumber("hi_hz", envelope.hi_hz, Need::kRequired) && numbers;
    if (numbers && envelope.lo_hz < 0.0) {
      entry.Report("lo_hz", "must not be negative, got " + Num(envelope.lo_hz));
      ok = false;
    } else if (numbers && envelope.hi_hz <= envelope.lo_hz) {
      entry.Report("hi_hz",
                   "hi_hz " + Num(envelope.hi_hz) + " must be above lo_hz " + Num(envelope.lo_hz));
      ok = false;
    } else if (numbers && rate_ok && envelope.hi_hz > point.sample_rate_hz / 2.0) {
      entry.Report("hi_hz", "hi_hz " + Num(envelope.hi_hz) + " is above the Nyquist frequency " +
                                Num(point.sample_rate_hz / 2.0) + " Hz");
      ok = false;
    }
    ok = ok && numbers;
  }
  if (entry.ReadCount("segment", envelope.segment, Need::kOptional) && envelope.segment < 16) {
    entry.Report("segment", "must be at least 16 samples, got " + std::to_string(envelope.segment));
    ok = false;
  }
  if (entry.ReadCount("harmonics", envelope.harmonics, Need::kOptional) &&
      (envelope.harmonics < 1 || envelope.harmonics > 10)) {
    entry.Report("harmonics",
                 "must be between 1 and 10, got " + std::to_string(envelope.harmonics));
    ok = false;
  }
  if (entry.ReadNumber("tolerance_percent", envelope.tolerance_percent, Need::kOptional) &&
      !(envelope.tolerance_percent > 0.0 && envelope.tolerance_percent < 50.0)) {
    entry.Report("tolerance_percent",
                 "must be above 0 and below 50 %, got " + Num(envelope.tolerance_percent));
    ok = false;
  }
  if (ok) point.diagnostics.envelope = envelope;
}

}  // namespace

void ReadMachineDiagnostics(ProblemList& problems, MapReader& entry, MachineConfig& machine) {
  MachineDiagnosticsConfig& d = machine.diagnostics;
  ReadBearing(problems, entry, d);
  long long vanes = 0;
  if (entry.ReadInteger("vanes", vanes, Need::kOptional)) {
    if (vanes < 1 || vanes > 1000) {
      entry.Report("vanes", "must be between 1 and 1000, got " + std::to_string(vanes));
    } else {
      d.vanes = static_cast<int>(vanes);
    }
  }
  entry.ReadParsed("speed_source", d.speed_source, Need::kOptional, ParseSpeedSource);
  if (entry.ReadNumber("speed_search_percent", d.speed_search_percent, Need::kOptional) &&
      !(d.speed_search_percent > 0.0 && d.speed_search_percent < 50.0)) {
    entry.Report("speed_search_percent",
                 "must be above 0 and below 50 %, got " + Num(d.speed_search_percent));
    d.speed_search_percent = 10.0;
  }
}

void ReadPointDiagnostics(ProblemList& problems, MapReader& entry, PointConfig& point,
                          const MachineConfig* machine, bool rate_ok) {
  entry.ReadBool("tachometer", point.diagnostics.tachometer, Need::kOptional);
  if (point.diagnostics.tachometer) {
    for (std::string_view key : {"order_bands", "envelope"}) {
      if (entry.Has(key)) {
        entry.Report(key, "a tachometer point carries pulses, not vibration: " + std::string(key) +
                              " belong on the machine's vibration points");
      }
    }
    if (machine != nullptr && machine->diagnostics.speed_source != SpeedSourceKind::kTachometer) {
      entry.Report("tachometer", "machine " + QuoteValue(machine->id) + " takes its speed from " +
                                     std::string(ToString(machine->diagnostics.speed_source)) +
                                     "; set its speed_source: tachometer");
    }
    return;
  }
  // Order band names share the point's measure names with its bands, the overall indicators and
  // the speed and envelope measures.
  std::map<std::string, int, std::less<>> names;
  for (const auto& band : point.bands) names.emplace(band.name, 0);
  for (const auto& overall : kOverallMeasures) names.emplace(std::string(overall.name), 0);
  names.emplace(std::string(kSpeedMeasureName), 0);
  for (std::string_view name : kEnvelopeMeasures) names.emplace(std::string(name), 0);
  for (const auto& band : point.bands) {
    if (band.name == kSpeedMeasureName || band.name.starts_with("env_")) {
      problems.Add(entry.mark(), entry.KeyPath("bands"),
                   "band name " + QuoteValue(band.name) +
                       " is reserved for the machine-aware measures; choose another");
    }
  }
  ReadOrderBands(problems, entry, point, machine, names);
  ReadEnvelope(problems, entry, point, machine, rate_ok);
}

}  // namespace spinward::config::internal
