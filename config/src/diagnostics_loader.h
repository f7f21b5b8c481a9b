// Reading the machine-aware keys of the site file (diagnostics_config.h): a machine's bearing,
// vanes and speed source; a point's tachometer flag, order bands and envelope block. Kept apart
// from site_loader.cc, which calls these with its own readers.
#pragma once

#include <string>
#include <vector>

#include "spinward/config/site_config.h"
#include "yaml_map_reader.h"

namespace spinward::config::internal {

inline constexpr std::string_view kMachineDiagnosticKeys[] = {"bearing", "vanes", "speed_source",
                                                              "speed_search_percent"};
inline constexpr std::string_view kPointDiagnosticKeys[] = {"tachometer", "order_bands",
                                                            "envelope"};

void ReadMachineDiagnostics(ProblemList& problems, MapReader& entry, MachineConfig& machine);

// After the point's bands: order band names must differ from them. `machine` may be null (an
// unknown machine id is reported elsewhere).
void ReadPointDiagnostics(ProblemList& problems, MapReader& entry, PointConfig& point,
                          const MachineConfig* machine, bool rate_ok);

}  // namespace spinward::config::internal
