// Units are looked up in one table so that parsing, printing, the quantity and the SI factor of a
// unit can never disagree. Factors are exact by definition: g = 9.80665 m/s^2 (CGPM 1901),
// 1 in = 0.0254 m (international yard and pound agreement, 1959), so 1 mil = 25.4 um.
#include "spinward/estimators/units.h"

#include <array>
#include <charconv>
#include <cmath>
#include <string>
#include <system_error>

namespace spinward::estimators {
namespace {

struct UnitInfo {
  Unit unit;
  std::string_view name;  // canonical spelling, printed by ToString
  Quantity quantity;
  double si_factor;  // value in unit x si_factor = value in m/s^2, m/s or m
};

constexpr double kInch = 0.0254;  // m, exact (1959 agreement)

constexpr std::array<UnitInfo, 8> kUnits = {{
    {Unit::kG, "g", Quantity::kAcceleration, kStandardGravity},
    {Unit::kMetresPerSecondSquared, "m/s^2", Quantity::kAcceleration, 1.0},
    {Unit::kMillimetresPerSecond, "mm/s", Quantity::kVelocity, 1e-3},
    {Unit::kMetresPerSecond, "m/s", Quantity::kVelocity, 1.0},
    {Unit::kInchesPerSecond, "in/s", Quantity::kVelocity, kInch},
    {Unit::kMicrometres, "um", Quantity::kDisplacement, 1e-6},
    {Unit::kMillimetres, "mm", Quantity::kDisplacement, 1e-3},
    {Unit::kMils, "mil", Quantity::kDisplacement, kInch * 1e-3},
}};

// Other spellings people write for the same unit.
struct Alias {
  std::string_view text;
  Unit unit;
};
constexpr std::array<Alias, 3> kAliases = {{
    {"m/s2", Unit::kMetresPerSecondSquared},
    {"m/s**2", Unit::kMetresPerSecondSquared},
    {"\xC2\xB5m", Unit::kMicrometres},  // UTF-8 micro sign
}};

const UnitInfo& Info(Unit unit) {
  for (const auto& info : kUnits) {
    if (info.unit == unit) return info;
  }
  return kUnits[1];  // unreachable for a valid enum value
}

std::string_view Trim(std::string_view text) {
  constexpr std::string_view kSpace = " \t\r\n";
  const auto first = text.find_first_not_of(kSpace);
  if (first == std::string_view::npos) return {};
  const auto last = text.find_last_not_of(kSpace);
  return text.substr(first, last - first + 1);
}

std::string UnitList() {
  std::string list;
  for (const auto& info : kUnits) {
    if (!list.empty()) list += ", ";
    list += info.name;
  }
  return list;
}

}  // namespace

Result<Unit> ParseUnit(std::string_view text) {
  const std::string_view trimmed = Trim(text);
  for (const auto& info : kUnits) {
    if (trimmed == info.name) return info.unit;
  }
  for (const auto& alias : kAliases) {
    if (trimmed == alias.text) return alias.unit;
  }
  return Error{"unknown unit '" + std::string(text) + "' (expected one of " + UnitList() + ")"};
}

std::string_view ToString(Unit unit) { return Info(unit).name; }

Result<Quantity> ParseQuantity(std::string_view text) {
  const std::string_view trimmed = Trim(text);
  if (trimmed == "acceleration") return Quantity::kAcceleration;
  if (trimmed == "velocity") return Quantity::kVelocity;
  if (trimmed == "displacement") return Quantity::kDisplacement;
  return Error{"unknown quantity '" + std::string(text) +
               "' (expected acceleration, velocity or displacement)"};
}

std::string_view ToString(Quantity quantity) {
  switch (quantity) {
    case Quantity::kAcceleration:
      return "acceleration";
    case Quantity::kVelocity:
      return "velocity";
    case Quantity::kDisplacement:
      return "displacement";
  }
  return "unknown";
}

Quantity QuantityOf(Unit unit) { return Info(unit).quantity; }

Unit DefaultUnit(Quantity quantity) {
  switch (quantity) {
    case Quantity::kAcceleration:
      return Unit::kMetresPerSecondSquared;
    case Quantity::kVelocity:
      return Unit::kMillimetresPerSecond;
    case Quantity::kDisplacement:
      return Unit::kMicrometres;
  }
  return Unit::kMetresPerSecondSquared;
}

double ToSiFactor(Unit unit) { return Info(unit).si_factor; }

Result<double> ConversionFactor(Unit from, Unit to) {
  if (QuantityOf(from) != QuantityOf(to)) {
    return Error{"cannot convert " + std::string(ToString(from)) + " (" +
                 std::string(ToString(QuantityOf(from))) + ") to " + std::string(ToString(to)) +
                 " (" + std::string(ToString(QuantityOf(to))) + ")"};
  }
  if (from == to) return 1.0;  // exact, no rounding through SI
  return ToSiFactor(from) / ToSiFactor(to);
}

Result<Sensitivity> Sensitivity::Parse(std::string_view text) {
  const std::string quoted = "sensitivity '" + std::string(text) + "'";
  std::string_view rest = Trim(text);

  // The number: from_chars accepts neither a leading '+' nor spaces, which is what we want.
  double value = 0.0;
  const auto [end, error] = std::from_chars(rest.data(), rest.data() + rest.size(), value);
  if (error != std::errc() || end == rest.data()) {
    return Error{quoted + ": expected a number first, as in '100 mV/g'"};
  }
  rest = Trim(rest.substr(static_cast<std::size_t>(end - rest.data())));
  if (!std::isfinite(value) || value <= 0.0) {
    return Error{quoted + ": the value must be positive and finite"};
  }

  // The voltage unit, then '/', then the engineering unit, optionally in parentheses.
  const auto slash = rest.find('/');
  if (slash == std::string_view::npos) {
    return Error{quoted + ": expected '<number> mV/<unit>' or '<number> V/<unit>'"};
  }
  const std::string_view volts = Trim(rest.substr(0, slash));
  double volts_factor = 0.0;
  if (volts == "V") {
    volts_factor = 1.0;
  } else if (volts == "mV") {
    volts_factor = 1e-3;
  } else if (volts == "uV" || volts == "\xC2\xB5V") {
    volts_factor = 1e-6;
  } else {
    return Error{quoted + ": unknown voltage unit '" + std::string(volts) +
                 "' (expected V, mV or uV)"};
  }
  std::string_view unit_text = Trim(rest.substr(slash + 1));
  if (!unit_text.empty() && unit_text.front() == '(') {
    if (unit_text.back() != ')') return Error{quoted + ": unbalanced parenthesis"};
    unit_text = unit_text.substr(1, unit_text.size() - 2);
  }
  auto unit = ParseUnit(unit_text);
  if (!unit.ok()) return Error{quoted + ": " + unit.message()};

  Sensitivity sensitivity;
  sensitivity.volts_per_unit = value * volts_factor;
  sensitivity.unit = *unit;
  if (!(sensitivity.volts_per_unit > 0.0) || !std::isfinite(sensitivity.volts_per_unit)) {
    return Error{quoted + ": the value must be positive and finite"};  // e.g. 1e-320 uV underflows
  }
  return sensitivity;
}

}  // namespace spinward::estimators
