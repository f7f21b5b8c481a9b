// Each file in tests/data/config/broken/ is one small valid site with one mistake put in (a few get
// a second problem that follows from the first). The table says where an editor shows the mistake
// (line and column counted by hand from the file, 1-based, a tab counting as one column), the key
// it is reported against and a part of the problem text.
#include <gtest/gtest.h>

#include <filesystem>
#include <set>
#include <string>

#include "spinward/config/site_loader.h"
#include "support/test_paths.h"

namespace spinward::config {
namespace {

struct BrokenCase {
  const char* file;
  int line;
  int column;
  const char* key;
  const char* problem_part;
  std::size_t problem_count;  // all problems the file must produce, the expected one included
};

// Columns: count the characters before the value (or key) on that line, plus one.
const BrokenCase kBrokenCases[] = {
    // "    extra: y" under "  name: ...": a mapping value where none may start; yaml-cpp marks
    // the colon.
    {"syntax_bad_indent.yaml", 3, 10, "", "YAML syntax error", 1},
    // A tab before "name:" (YAML forbids tabs for indentation); yaml-cpp marks the colon.
    {"syntax_tab_indent.yaml", 2, 6, "", "YAML syntax error", 1},
    {"empty.yaml", 1, 1, "", "holds no settings", 1},
    {"unknown_key_typo.yaml", 6, 20, "profiles[0].segmnt", "did you mean 'segment'?", 1},
    // Also "no sample source": the listeners are under the wrong key.
    {"unknown_top_key.yaml", 15, 1, "listener", "did you mean 'listeners'?", 2},
    {"wrong_type_rate.yaml", 11, 21, "points[0].sample_rate_hz", "expected a number, got 'fast'",
     1},
    // Also the point's machine P-101, which no longer exists.
    {"wrong_type_machines.yaml", 3, 11, "machines", "expected a list, got a single value", 2},
    // A missing key is reported where its mapping starts (the point's first key).
    {"missing_sensor.yaml", 8, 5, "points[0].sensor", "required key is missing", 1},
    {"missing_site.yaml", 1, 1, "site", "required key is missing", 1},
    {"duplicate_machine.yaml", 5, 10, "machines[1].id",
     "duplicate machine id 'P-101' (first at line 4)", 1},
    {"duplicate_sensor.yaml", 17, 13, "points[1].sensor",
     "duplicate sensor id 'LK-P101-DE-H' (first at line 10)", 1},
    {"duplicate_key.yaml", 12, 5, "points[0].sample_rate_hz", "key given twice (first at line 11)",
     1},
    // 15000 Hz > 25600 / 2 = 12800 Hz (Nyquist).
    {"band_above_nyquist.yaml", 14, 45, "points[0].bands[0].hi_hz",
     "above the Nyquist frequency 12800 Hz", 1},
    {"band_lo_not_below_hi.yaml", 14, 46, "points[0].bands[0].hi_hz", "must be above lo_hz 1000",
     1},
    {"band_units_wrong_quantity.yaml", 14, 77, "points[0].bands[0].units",
     "measure acceleration, not velocity", 1},
    {"overlap_not_below_segment.yaml", 6, 44, "profiles[0].overlap",
     "must be less than segment 4096", 1},
    // A percentage must be below 100 (an overlap of the whole segment never advances).
    {"overlap_bad_percent.yaml", 6, 44, "profiles[0].overlap", "150", 1},
    {"fft_shorter_than_segment.yaml", 6, 47, "profiles[0].fft_length",
     "must not be less than segment 4096", 1},
    // 0.01 s x 25600 Hz / 2048-sample hop = 0.125 hop: no average would ever complete.
    {"interval_too_short.yaml", 12, 14, "points[0].profile", "less than half a segment hop", 1},
    {"unknown_machine.yaml", 9, 14, "points[0].machine",
     "no machine has id 'P-102'; did you mean 'P-101'?", 1},
    {"unknown_profile.yaml", 12, 14, "points[0].profile",
     "no profile has id 'standrad'; did you mean 'standard'?", 1},
    {"bad_window.yaml", 6, 57, "profiles[0].window", "hanning-ish", 1},
    {"bad_units.yaml", 11, 12, "points[0].units", "furlongs", 1},
    {"bad_sensitivity.yaml", 11, 18, "points[0].sensitivity", "100 mV per g", 1},
    // TCP and UDP ports are 16-bit: 0 to 65535 (RFC 793, RFC 768).
    {"port_out_of_range.yaml", 16, 23, "listeners[0].port", "port 70000 is out of range", 1},
    // 300 is not an octet.
    {"bad_address.yaml", 16, 26, "listeners[0].address", "not a numeric IPv4 or IPv6 address", 1},
    // Peers are matched by address; host names are not resolved.
    {"bad_peer.yaml", 16, 56, "listeners[0].allowed_peers[1]", "'localhost' is not a numeric", 1},
    // ISO 10816-3 has machine groups 1 and 2 only.
    {"iso_group_3.yaml", 4, 57, "machines[0].iso_group", "must be 1 or 2", 1},
    {"time_constant_without_exponential.yaml", 6, 52, "profiles[0].time_constant_s",
     "applies to exponential averaging only", 1},
    {"bad_machine_kind.yaml", 4, 23, "machines[0].kind", "pmup", 1},
    // A limit set names a band of its point or an overall indicator.
    {"alarm_unknown_measure.yaml", 17, 19, "points[0].alarms[0].measure",
     "unknown measure 'velocty'; did you mean 'velocity'? (known: velocity, bearing, overall_rms",
     1},
    // Alert must sit below danger (trade practice: alert warns before danger).
    {"alarm_alert_not_below_danger.yaml", 17, 48, "points[0].alarms[0].danger",
     "danger 0.5 must be above alert 1", 1},
    // ISO 10816-3 zones are RMS velocity in mm/s; the bearing band is acceleration in g.
    {"alarm_preset_not_velocity.yaml", 17, 36, "points[0].alarms[0].preset",
     "band 'bearing' measures acceleration in g", 1},
    {"alarm_preset_with_alert.yaml", 17, 56, "points[0].alarms[0].alert",
     "alert is set by preset 'iso10816-3'", 1},
    {"alarm_bad_on_delay.yaml", 17, 63, "points[0].alarms[0].on_delay",
     "N (3) must not exceed M (2)", 1},
    {"alarm_bad_deadband.yaml", 17, 63, "points[0].alarms[0].deadband", "'5 percent' is not", 1},
    {"sensor_mean_window_reversed.yaml", 16, 50, "points[0].sensor_checks.mean_window",
     "low 0.5 must be below high -0.5", 1},
    {"storage_negative_retention.yaml", 20, 25, "storage.retention.raw_days",
     "must be 0 (keep forever) or more days, got -5", 1},
};

std::string Describe(const LoadedSite& loaded) {
  std::string text;
  for (const auto& problem : loaded.problems) text += "  " + problem.ToString() + "\n";
  return text;
}

TEST(BrokenFiles, EachReportsItsProblemAtItsPlace) {
  for (const auto& expected : kBrokenCases) {
    SCOPED_TRACE(expected.file);
    auto path = testing::TestDataDir() / "config" / "broken" / expected.file;
    ASSERT_TRUE(std::filesystem::exists(path)) << path;
    LoadedSite loaded = LoadSiteFile(path);
    EXPECT_FALSE(loaded.ok());
    EXPECT_EQ(loaded.problems.size(), expected.problem_count) << Describe(loaded);
    bool found = false;
    for (const auto& problem : loaded.problems) {
      if (problem.line == expected.line && problem.column == expected.column &&
          problem.key == expected.key &&
          problem.problem.find(expected.problem_part) != std::string::npos) {
        found = true;
        EXPECT_EQ(problem.file, path.string());
      }
    }
    EXPECT_TRUE(found) << "expected " << expected.line << ":" << expected.column << ": "
                       << expected.key << ": ..." << expected.problem_part << "...\ngot:\n"
                       << Describe(loaded);
  }
}

TEST(BrokenFiles, EveryFixtureIsInTheTable) {
  // A fixture added without a table row would never be checked.
  std::set<std::string> listed;
  for (const auto& expected : kBrokenCases) listed.insert(expected.file);
  for (const auto& entry :
       std::filesystem::directory_iterator(testing::TestDataDir() / "config" / "broken")) {
    EXPECT_TRUE(listed.count(entry.path().filename().string()) == 1) << entry.path();
  }
}

}  // namespace
}  // namespace spinward::config
