// ISO 10816-3:2009 (now ISO 20816-3) evaluation zones for broad-band RMS velocity, 10-1000 Hz, on
// the bearing housings of industrial machines, and alarm limits derived from them.
// Zones: A new machines; B unrestricted long-term operation; C limited operation until remedial
// action; D severe enough to cause damage. Boundaries depend on the machine group (group 1:
// 300 kW-50 MW, group 2: 15-300 kW) and the support (rigid or flexible).
// Preset limits are our choice: alert at the B/C boundary, danger at C/D. The standard's
// baseline-relative rule gives alert = baseline + 0.25 x (B/C), capped at 1.25 x (B/C), and a
// danger limit in zone C or D no higher than 1.25 x (C/D). Spinward's alarms are advisory; the
// standard's zones are guidance for the machine's owner, not a replacement for the manufacturer's
// limits or the site's protection system. Thread-safety: pure functions over a constant table.
#pragma once

#include <optional>
#include <string_view>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

enum class IsoMachineGroup { kGroup1, kGroup2 };
enum class IsoSupport { kRigid, kFlexible };
enum class IsoZone { kA, kB, kC, kD };

struct IsoZoneBoundaries {
  double ab = 0.0;  // mm/s RMS
  double bc = 0.0;
  double cd = 0.0;
};

struct IsoPresetLimits {
  double alert = 0.0;  // mm/s RMS
  double danger = 0.0;
};

IsoZoneBoundaries IsoBoundaries(IsoMachineGroup group, IsoSupport support);

// A value on a boundary belongs to the upper zone, as an alarm at that boundary raises at it.
IsoZone ClassifyIsoZone(const IsoZoneBoundaries& boundaries, double velocity_rms_mm_s);
char ToChar(IsoZone zone);  // 'A'..'D'

// Alert at B/C, danger at C/D.
IsoPresetLimits IsoAbsoluteLimits(IsoMachineGroup group, IsoSupport support);

// The baseline-relative rule. `baseline_mm_s` is the machine's normal steady value; `danger_mm_s`
// defaults to the C/D boundary and must lie in zone C or D and not above 1.25 x (C/D).
Result<IsoPresetLimits> IsoBaselineLimits(IsoMachineGroup group, IsoSupport support,
                                          double baseline_mm_s,
                                          std::optional<double> danger_mm_s = std::nullopt);

// "1" / "2" and "rigid" / "flexible", as the site configuration writes them.
Result<IsoMachineGroup> ParseIsoMachineGroup(std::string_view text);
Result<IsoSupport> ParseIsoSupport(std::string_view text);

}  // namespace spinward::daemon
