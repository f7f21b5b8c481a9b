// `spinward check-config FILE` through the built binary: exit 0 and a summary for a good file,
// exit 1 and every problem as file:line:column: key: problem for a broken one, exit 2 for a usage
// error (the CLI's convention, daemon/include/spinward/daemon/cli.h).
#include <gtest/gtest.h>

#include <filesystem>
#include <string>

#include "support/test_paths.h"

namespace spinward::config {
namespace {

std::string CheckConfig(const std::string& arguments) {
  return testing::SpinwardBinary().string() + " check-config " + arguments;
}

class CheckConfigCommand : public ::testing::Test {
 protected:
  void SetUp() override {
    // Not skipped: a missing binary means the build is incomplete, which is a failure.
    ASSERT_TRUE(std::filesystem::exists(testing::SpinwardBinary()))
        << testing::SpinwardBinary() << " is not built";
  }
};

TEST_F(CheckConfigCommand, GoodFileExitsZeroWithSummary) {
  auto file = testing::TestDataDir() / "config" / "larkfield_site.yaml";
  auto result = testing::RunCommand(CheckConfig("'" + file.string() + "'"));
  EXPECT_EQ(result.exit_code, 0) << result.error_output;
  EXPECT_EQ(result.error_output, "");
  // The summary names each machine, each point's sensor, rate and profile, and the listeners.
  for (const char* part :
       {"Larkfield booster pump station", "P-101", "P-102", "F-201", "LK-P101-DE-H", "LK-F201-DE-V",
        "12800 Hz, profile slow-fan", "tcp 127.0.0.1 port 7301", "udp ::1 port 7302"}) {
    EXPECT_NE(result.output.find(part), std::string::npos) << part << "\n" << result.output;
  }
}

TEST_F(CheckConfigCommand, BrokenFileExitsOneWithEveryProblem) {
  // wrong_type_machines.yaml: machines is not a list (3:11), so the point's machine is unknown
  // (8:14); columns counted by hand from the file.
  auto file = testing::TestDataDir() / "config" / "broken" / "wrong_type_machines.yaml";
  auto result = testing::RunCommand(CheckConfig("'" + file.string() + "'"));
  EXPECT_EQ(result.exit_code, 1);
  EXPECT_EQ(result.output, "");
  EXPECT_NE(result.error_output.find(file.string() + ":3:11: machines: expected a list"),
            std::string::npos)
      << result.error_output;
  EXPECT_NE(result.error_output.find(file.string() + ":8:14: points[0].machine: no machine"),
            std::string::npos)
      << result.error_output;
  EXPECT_NE(result.error_output.find("2 problems"), std::string::npos) << result.error_output;
}

TEST_F(CheckConfigCommand, MissingFileExitsOne) {
  auto result = testing::RunCommand(CheckConfig("/nonexistent/larkfield.yaml"));
  EXPECT_EQ(result.exit_code, 1);
  EXPECT_NE(result.error_output.find("cannot read the file"), std::string::npos)
      << result.error_output;
}

TEST_F(CheckConfigCommand, UsageErrorsExitTwo) {
  EXPECT_EQ(testing::RunCommand(CheckConfig("")).exit_code, 2);
  EXPECT_EQ(testing::RunCommand(CheckConfig("a.yaml b.yaml")).exit_code, 2);
  EXPECT_EQ(testing::RunCommand(CheckConfig("--verbose")).exit_code, 2);
  auto help = testing::RunCommand(CheckConfig("--help"));
  EXPECT_EQ(help.exit_code, 0);
  EXPECT_NE(help.output.find("usage: spinward check-config FILE"), std::string::npos);
}

}  // namespace
}  // namespace spinward::config
