// The interim `spinward demo`: it must leave a readable recording whose content matches what the
// invented pump P-101 is said to have, and a summary that agrees with `spinward analyze`.
#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <string>

#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::CommandResult;
using spinward::testing::FreshTempDir;
using spinward::testing::RunCommand;
using spinward::testing::SpinwardBinary;

TEST(Demo, WritesRecordingWhoseVelocityMatchesItsLines) {
  const fs::path dir = FreshTempDir("demo");
  const CommandResult demo =
      RunCommand(SpinwardBinary().string() + " demo --seconds 4 --dir " + dir.string());
  ASSERT_EQ(demo.exit_code, 0) << demo.error_output;
  const fs::path wav = dir / "p101_de_radial.wav";
  EXPECT_TRUE(fs::exists(wav));
  EXPECT_TRUE(fs::exists(dir / "p101_de_radial_psd.csv"));
  EXPECT_TRUE(fs::exists(dir / "p101_de_radial_analysis.json"));
  EXPECT_NE(demo.output.find("not a protection system"), std::string::npos);

  // Its lines are 2.2, 0.9 and 0.8 mm/s peak (1x, 2x, vane pass); a sine's RMS is peak / sqrt(2)
  // (trade fact), so the 10-1000 Hz velocity is about sqrt((2.2^2 + 0.9^2 + 0.8^2) / 2) =
  // 1.773 mm/s; noise and the bearing's impacts add a little (allowed: 3 %).
  const CommandResult analyzed =
      RunCommand(SpinwardBinary().string() + " analyze " + wav.string() +
                 " --sensitivity '100 mV/g' --segment 16384 --quantity velocity --band 10:1000");
  ASSERT_EQ(analyzed.exit_code, 0) << analyzed.error_output;
  const double rms = std::stod(analyzed.output.substr(analyzed.output.rfind(',') + 1));
  const double lines = std::sqrt((2.2 * 2.2 + 0.9 * 0.9 + 0.8 * 0.8) / 2.0);
  EXPECT_NEAR(rms, lines, 0.03 * lines);

  // The summary prints the same figure, to two decimals.
  char printed[64];
  std::snprintf(printed, sizeof printed, "overall velocity  %.2f mm/s RMS", rms);
  EXPECT_NE(demo.output.find(printed), std::string::npos) << demo.output;

  // Outer-race ball pass of the invented bearing (9 balls, 12.7 mm on a 65 mm pitch circle, 0 deg,
  // shaft 1480 rpm): n fr / 2 (1 - d/D) = 89.3 Hz (Harris, Rolling Bearing Analysis).
  const double bpfo = 9.0 * (1480.0 / 60.0) / 2.0 * (1.0 - 12.7 / 65.0);
  char ball_pass[64];
  std::snprintf(ball_pass, sizeof ball_pass, "outer-race ball pass %.1f Hz", bpfo);
  EXPECT_NE(demo.output.find(ball_pass), std::string::npos) << demo.output;
}

TEST(Demo, BadOptionIsOneLine) {
  const CommandResult result = RunCommand(SpinwardBinary().string() + " demo --seconds 0");
  EXPECT_EQ(result.exit_code, 2);
  EXPECT_EQ(result.error_output, "spinward demo: --seconds '0': must be a number from 1 to 600\n");
}

}  // namespace
}  // namespace spinward::daemon
