#include "spinward/config/demo_site.h"

#include <sstream>

namespace spinward::config {
namespace {

struct DemoPoint {
  const char* id;
  const char* machine;
  const char* location;
  const char* direction;
  const char* sensor;
};

// Horizontal on both bearings, plus axial on the pumps' drive end, where thrust problems show.
constexpr DemoPoint kPoints[] = {
    {"P101-DE-H", "P-101", "drive-end bearing", "horizontal", "LK-P101-DE-H"},
    {"P101-DE-A", "P-101", "drive-end bearing", "axial", "LK-P101-DE-A"},
    {"P101-NDE-H", "P-101", "non-drive-end bearing", "horizontal", "LK-P101-NDE-H"},
    {"P102-DE-H", "P-102", "drive-end bearing", "horizontal", "LK-P102-DE-H"},
    {"P102-DE-A", "P-102", "drive-end bearing", "axial", "LK-P102-DE-A"},
    {"P102-NDE-H", "P-102", "non-drive-end bearing", "horizontal", "LK-P102-NDE-H"},
    {"F201-DE-H", "F-201", "drive-end bearing", "horizontal", "LK-F201-DE-H"},
    {"F201-NDE-H", "F-201", "non-drive-end bearing", "horizontal", "LK-F201-NDE-H"},
};

// A double-quoted YAML scalar: backslashes and quotes escaped, so any path survives.
std::string Quoted(const std::string& text) {
  std::string quoted = "\"";
  for (char c : text) {
    if (c == '\\' || c == '"') quoted += '\\';
    quoted += c;
  }
  return quoted + "\"";
}

}  // namespace

std::string DemoSiteYaml(const DemoSiteOptions& options) {
  std::ostringstream out;
  out.precision(15);
  out << "# Larkfield booster pump station: an invented site for Spinward's demonstration.\n"
         "site:\n"
         "  name: Larkfield booster pump station\n"
         "machines:\n"
         "  - {id: P-101, name: Booster pump 1, kind: pump, speed_rpm: 1480, iso_group: 2, "
         "support: rigid}\n"
         "  - {id: P-102, name: Booster pump 2, kind: pump, speed_rpm: 1480, iso_group: 2, "
         "support: rigid}\n"
         "  - {id: F-201, name: Pump hall ventilation fan, kind: fan, speed_rpm: 980, "
         "iso_group: 2, support: flexible}\n"
         "profiles:\n"
         "  - id: standard\n"
         "    segment: 4096\n"
         "    overlap: 50%\n"
         "    window: hann\n"
         "    detrend: mean\n"
         "    averaging: mean\n"
         "    interval_s: "
      << options.interval_s
      << "\n"
         "points:\n";
  for (const auto& point : kPoints) {
    out << "  - id: " << point.id << "\n"
        << "    machine: " << point.machine << "\n"
        << "    location: " << point.location << "\n"
        << "    direction: " << point.direction << "\n"
        << "    sensor: " << point.sensor << "\n"
        << "    sensitivity: 100 mV/g\n"
        << "    sample_rate_hz: 25600\n"
        << "    profile: standard\n"
        << "    bands:\n"
        // ISO 10816-3 judges RMS velocity over 10-1000 Hz.
        << "      - {name: velocity, lo_hz: 10, hi_hz: 1000, quantity: velocity, units: mm/s}\n"
        // Rolling-element bearing defects ring in the kHz range.
        << "      - {name: bearing, lo_hz: 1000, hi_hz: 10000, quantity: acceleration, units: g}\n"
        // Below 10 Hz: looseness, foundation and flow effects, as displacement.
        << "      - {name: low, lo_hz: 2, hi_hz: 10, quantity: displacement, units: um}\n"
        << "    alarms:\n"
        // Alert and danger at the ISO 10816-3 zone boundaries B/C and C/D of the machine's class
        // (group 2 rigid pumps 2.8 / 4.5 mm/s, the flexible fan 4.5 / 7.1 mm/s).
        << "      - {measure: velocity, preset: iso10816-3, on_delay: \"2 of 3\", off_delay: 2, "
           "latching: true}\n"
        // Demo choice, no source: bearing-band limits for this invented station.
        << "      - {measure: bearing, alert: 0.5, danger: 1.0, on_delay: \"2 of 3\"}\n"
        // A 100 mV/g sensor into a +-5 V input clips at 5 V / 0.1 V/g = 50 g. The noise floor is a
        // demo choice: above a general-purpose accelerometer's own noise (from memory).
        << "    sensor_checks: {full_scale: 50, noise_floor_rms: 0.0005}\n";
  }
  out << "listeners:\n"
      << "  - {type: tcp, address: 127.0.0.1, port: " << options.tcp_port << "}\n"
      << "  - {type: udp, address: 127.0.0.1, port: " << options.udp_port << "}\n";
  if (!options.drop_directory.empty()) {
    out << "drop_directory:\n"
        << "  path: " << Quoted(options.drop_directory) << "\n"
        << "  files:\n"
        << "    - {pattern: \"P101_DE_*.wav\", point: P101-DE-H}\n"
        << "    - {pattern: \"P102_DE_*.wav\", point: P102-DE-H}\n"
        << "    - {pattern: \"F201_DE_*.wav\", point: F201-DE-H}\n";
  }
  out << "storage:\n"
      << "  path: " << Quoted(options.storage_path) << "\n"
      << "logging:\n"
      << "  level: info\n";
  return out.str();
}

}  // namespace spinward::config
