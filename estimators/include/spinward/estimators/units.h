// Engineering units for vibration: acceleration (g, m/s^2), velocity (mm/s, m/s, in/s) and
// displacement (um, mm, mil), the quantity each unit measures, conversions between units of one
// quantity, and sensor sensitivity (e.g. "100 mV/g") to turn raw volts into engineering units.
// Standard gravity g = 9.80665 m/s^2 exactly (CGPM 1901).
// Thread-safety: pure functions.
#pragma once

#include <string>
#include <string_view>

#include "spinward/estimators/result.h"

namespace spinward::estimators {

inline constexpr double kStandardGravity = 9.80665;  // m/s^2, exact by definition (CGPM 1901)

enum class Quantity { kAcceleration, kVelocity, kDisplacement };
enum class Unit {
  kG,
  kMetresPerSecondSquared,
  kMillimetresPerSecond,
  kMetresPerSecond,
  kInchesPerSecond,
  kMicrometres,
  kMillimetres,
  kMils,
};

// "g", "m/s^2" (also "m/s2"), "mm/s", "m/s", "in/s", "um", "mm", "mil"; surrounding spaces ignored.
Result<Unit> ParseUnit(std::string_view text);
std::string_view ToString(Unit unit);
// "acceleration", "velocity", "displacement".
Result<Quantity> ParseQuantity(std::string_view text);
std::string_view ToString(Quantity quantity);
Quantity QuantityOf(Unit unit);
Unit DefaultUnit(Quantity quantity);  // m/s^2, mm/s, um
// Multiply a value in `unit` by this to get SI (m/s^2, m/s, m).
double ToSiFactor(Unit unit);
// Multiply a value in `from` by this to get it in `to`; fails when the quantities differ.
Result<double> ConversionFactor(Unit from, Unit to);

// A sensor's sensitivity: volts per engineering unit of acceleration (or velocity, or
// displacement).
struct Sensitivity {
  double volts_per_unit = 1.0;
  Unit unit = Unit::kMetresPerSecondSquared;

  // Parses "100 mV/g", "10.2 mV/(m/s^2)", "1 V/g", "50 mV/(mm/s)" (V, mV or uV over any unit
  // above, parentheses optional); the value must be positive and finite.
  static Result<Sensitivity> Parse(std::string_view text);
  double VoltsToUnits(double volts) const { return volts / volts_per_unit; }
  bool operator==(const Sensitivity&) const = default;
};

}  // namespace spinward::estimators
