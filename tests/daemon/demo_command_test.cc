// `spinward demo`: the daemon on loopback with the built-in site, fed a compressed day in which
// pump P-101's drive-end bearing worsens. It must leave a database whose alarms follow the ISO
// preset limits, the expected number of records, and a close-up recording whose content matches
// what the invented pump is said to have.
#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>

#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::CommandResult;
using spinward::testing::FreshTempDir;
using spinward::testing::RunCommand;
using spinward::testing::SpinwardBinary;

std::size_t CountLines(const fs::path& path) {
  std::ifstream in(path);
  std::size_t n = 0;
  for (std::string line; std::getline(in, line);) n += line.empty() ? 0 : 1;
  return n;
}

TEST(Demo, DayEndsWithP101AlarmsRecordsAndCloseUp) {
  const fs::path dir = FreshTempDir("demo");
  const CommandResult demo = RunCommand(SpinwardBinary().string() + " demo --hours 8 --dir " +
                                        dir.string() + " --close-up-seconds 4");
  ASSERT_EQ(demo.exit_code, 0) << demo.error_output << demo.output;
  EXPECT_NE(demo.output.find("not a protection system"), std::string::npos);
  const fs::path db = dir / "larkfield.sqlite";
  ASSERT_TRUE(fs::exists(db));
  EXPECT_TRUE(fs::exists(dir / "larkfield-site.yaml"));

  // Records: each hourly snapshot is 3 s at 25600 Hz = 76800 samples, so floor((76800 - 4096) /
  // 2048) + 1 = 36 segments (scipy.signal.welch's count); 1 s intervals hold round(25600 / 2048)
  // = 13 segments, giving 13 + 13 + a 10-segment record ended by the next snapshot's time jump:
  // 3 records per point and hour, 8 points x 8 hours.
  EXPECT_EQ(CountLines(dir / "records.jsonl"), 8u * 8u * 3u);

  // P-101's drive end ends the day near 5.4 mm/s: above the ISO 10816-3 group 2 rigid C/D
  // boundary of 4.5 mm/s (Annex A, as transcribed in REFERENCE_VALUES.md), so it passes through
  // alert (B/C 2.8) to danger. The healthy pump P-102 never leaves zone B: no alarm.
  const CommandResult alarms =
      RunCommand(SpinwardBinary().string() + " alarms --format csv --db " + db.string());
  ASSERT_EQ(alarms.exit_code, 0) << alarms.error_output;
  EXPECT_NE(alarms.output.find("P101-DE-H"), std::string::npos) << alarms.output;
  EXPECT_NE(alarms.output.find("danger"), std::string::npos) << alarms.output;
  EXPECT_EQ(alarms.output.find("P102"), std::string::npos) << alarms.output;

  // The close-up is P-101 at the end of the day: lines of 7.5, 0.8 and 0.8 mm/s peak (1x, 2x,
  // vane pass; daemon/src/demo_scenario.cc). A sine's RMS is peak / sqrt(2) (trade fact), so the
  // 10-1000 Hz velocity is about sqrt((7.5^2 + 0.8^2 + 0.8^2) / 2) = 5.36 mm/s; noise and the
  // bearing's impacts add a little (allowed: 3 %). `spinward analyze` must agree.
  const fs::path wav = dir / "p101_de_radial.wav";
  ASSERT_TRUE(fs::exists(wav));
  const CommandResult analyzed =
      RunCommand(SpinwardBinary().string() + " analyze " + wav.string() +
                 " --sensitivity '100 mV/g' --segment 16384 --quantity velocity --band 10:1000");
  ASSERT_EQ(analyzed.exit_code, 0) << analyzed.error_output;
  const double rms = std::stod(analyzed.output.substr(analyzed.output.rfind(',') + 1));
  const double lines = std::sqrt((7.5 * 7.5 + 0.8 * 0.8 + 0.8 * 0.8) / 2.0);
  EXPECT_NEAR(rms, lines, 0.03 * lines);
  char printed[64];
  std::snprintf(printed, sizeof printed, "overall velocity  %.2f mm/s RMS", rms);
  EXPECT_NE(demo.output.find(printed), std::string::npos) << demo.output;

  // Outer-race ball pass of the invented bearing (9 balls, 12.7 mm on a 65 mm pitch circle, 0 deg,
  // shaft 1480 rpm): n fr / 2 (1 - d/D) = 89.3 Hz (Harris, Rolling Bearing Analysis).
  const double bpfo = 9.0 * (1480.0 / 60.0) / 2.0 * (1.0 - 12.7 / 65.0);
  char ball_pass[64];
  std::snprintf(ball_pass, sizeof ball_pass, "outer-race ball pass %.1f Hz", bpfo);
  EXPECT_NE(demo.output.find(ball_pass), std::string::npos) << demo.output;

  // The report command the demo prints runs as printed (the binary named by its full path, since
  // a build in the source tree does not put it on PATH) and writes the morning review.
  const auto at = demo.output.find(fs::canonical(SpinwardBinary()).string() + " report ");
  ASSERT_NE(at, std::string::npos) << demo.output;
  const std::string printed_report = demo.output.substr(at, demo.output.find('\n', at) - at);
  const CommandResult report = RunCommand(printed_report);
  ASSERT_EQ(report.exit_code, 0) << printed_report << "\n" << report.error_output;
  EXPECT_TRUE(fs::exists(dir / "review.html")) << printed_report;
}

TEST(Demo, BadOptionIsOneLine) {
  const CommandResult result = RunCommand(SpinwardBinary().string() + " demo --hours 0");
  EXPECT_EQ(result.exit_code, 2);
  EXPECT_EQ(result.error_output, "spinward demo: --hours '0': must be between 2 and 336\n");
}

}  // namespace
}  // namespace spinward::daemon
