#include "spinward/daemon/iso_presets.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>

namespace spinward::daemon {
namespace {

// ISO 10816-3:2009 Annex A, Tables A.1 and A.2 (zone boundaries, RMS velocity in mm/s, 10-1000 Hz),
// as transcribed in secondary sources; the values agree with our memory of the standard.
// Rows: group 1 rigid, group 1 flexible, group 2 rigid, group 2 flexible.
constexpr IsoZoneBoundaries kBoundaries[2][2] = {
    {{2.3, 4.5, 7.1}, {3.5, 7.1, 11.0}},
    {{1.4, 2.8, 4.5}, {2.3, 4.5, 7.1}},
};

// The standard's baseline rule: the alarm sits a quarter of the B/C boundary above the baseline and
// normally not above 1.25 x B/C; the trip normally not above 1.25 x C/D.
constexpr double kBaselineStep = 0.25;
constexpr double kCapFactor = 1.25;

std::string Num(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%g", value);
  return buffer;
}

}  // namespace

IsoZoneBoundaries IsoBoundaries(IsoMachineGroup group, IsoSupport support) {
  return kBoundaries[group == IsoMachineGroup::kGroup1 ? 0 : 1]
                    [support == IsoSupport::kRigid ? 0 : 1];
}

IsoZone ClassifyIsoZone(const IsoZoneBoundaries& boundaries, double velocity_rms_mm_s) {
  if (velocity_rms_mm_s >= boundaries.cd) return IsoZone::kD;
  if (velocity_rms_mm_s >= boundaries.bc) return IsoZone::kC;
  if (velocity_rms_mm_s >= boundaries.ab) return IsoZone::kB;
  return IsoZone::kA;
}

char ToChar(IsoZone zone) {
  switch (zone) {
    case IsoZone::kA:
      return 'A';
    case IsoZone::kB:
      return 'B';
    case IsoZone::kC:
      return 'C';
    case IsoZone::kD:
      return 'D';
  }
  return '?';
}

IsoPresetLimits IsoAbsoluteLimits(IsoMachineGroup group, IsoSupport support) {
  const IsoZoneBoundaries zones = IsoBoundaries(group, support);
  return {zones.bc, zones.cd};
}

Result<IsoPresetLimits> IsoBaselineLimits(IsoMachineGroup group, IsoSupport support,
                                          double baseline_mm_s, std::optional<double> danger_mm_s) {
  const IsoZoneBoundaries zones = IsoBoundaries(group, support);
  if (!std::isfinite(baseline_mm_s) || baseline_mm_s < 0.0) {
    return Error{"ISO baseline must be a finite velocity of 0 mm/s or more, got " +
                 Num(baseline_mm_s)};
  }
  const double danger_cap = kCapFactor * zones.cd;
  const double danger = danger_mm_s.value_or(zones.cd);
  if (!std::isfinite(danger) || danger < zones.bc || danger > danger_cap) {
    return Error{"ISO danger limit " + Num(danger) + " mm/s must lie in zone C or D (at least " +
                 Num(zones.bc) + ") and not above 1.25 x C/D = " + Num(danger_cap) + " mm/s"};
  }
  const double alert = std::min(baseline_mm_s + kBaselineStep * zones.bc, kCapFactor * zones.bc);
  if (alert >= danger) {
    return Error{"ISO alert limit " + Num(alert) + " mm/s from baseline " + Num(baseline_mm_s) +
                 " mm/s is not below the danger limit " + Num(danger) + " mm/s"};
  }
  return IsoPresetLimits{alert, danger};
}

Result<IsoMachineGroup> ParseIsoMachineGroup(std::string_view text) {
  if (text == "1") return IsoMachineGroup::kGroup1;
  if (text == "2") return IsoMachineGroup::kGroup2;
  return Error{"unknown ISO machine group '" + std::string(text) + "' (expected 1 or 2)"};
}

Result<IsoSupport> ParseIsoSupport(std::string_view text) {
  if (text == "rigid") return IsoSupport::kRigid;
  if (text == "flexible") return IsoSupport::kFlexible;
  return Error{"unknown ISO support '" + std::string(text) + "' (expected rigid or flexible)"};
}

}  // namespace spinward::daemon
