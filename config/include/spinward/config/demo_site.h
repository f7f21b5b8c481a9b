// The built-in demonstration site, as YAML text that goes through the same loader as a user's file:
// the Larkfield water utility's booster pump station (an invented site). Two centrifugal pumps,
// P-101 and P-102 (1480 rpm, ISO 10816-3 group 2, rigid), and the ventilation fan F-201 (980 rpm,
// group 2, flexible), each watched on its drive-end and non-drive-end bearings at 25600 Hz. Each
// point's velocity band is judged by the ISO 10816-3 preset (2 of 3 intervals, off after 2,
// latching), its bearing band by the demo's own limits (0.5 g / 1.0 g), and its sensor is checked
// for clipping at 50 g and a flatline below 0.0005 g RMS.
// Thread-safety: pure function.
#pragma once

#include <cstdint>
#include <string>

namespace spinward::config {

struct DemoSiteOptions {
  std::uint16_t tcp_port = 0;  // 0: the system picks a free port
  std::uint16_t udp_port = 0;
  double interval_s = 1.0;     // the averaging interval of the shared profile
  std::string drop_directory;  // empty: no drop directory
  std::string storage_path = "larkfield.sqlite";
};

std::string DemoSiteYaml(const DemoSiteOptions& options = {});

}  // namespace spinward::config
