// The command hook runs real programs from Debian's coreutils and /bin/sh as the configured program
// (the hook itself never uses a shell; a test script may): the alarm JSON arrives on standard
// input byte for byte, arguments arrive literally (shell syntax in them is not interpreted), the
// exit status is reported, a program outliving its timeout is killed, a missing program is
// reported by name.
#include "spinward/daemon/command_hook.h"

#include <gtest/gtest.h>

#include <csignal>
#include <fstream>
#include <sstream>

#include "daemon/wait_until.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

std::string ReadText(const std::filesystem::path& path) {
  std::ifstream in(path);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

const std::string kAlarm =
    "{\"schema\":1,\"event_id\":\"a1-7\",\"point\":\"P101-DE-H\",\"to\":\"danger\","
    "\"message\":\"velocity 7.2 mm/s at or above danger 7.1; $(touch /tmp/x) `id`\"}";

TEST(CommandHook, TheProgramGetsTheAlarmOnStdinAndItsArgumentsLiterally) {
  const auto dir = spinward::testing::FreshTempDir("command-hook-stdin");
  const auto out = dir / "received.json";
  const auto args_out = dir / "args.txt";
  // The script stores its stdin and its arguments one per line.
  const auto script = dir / "store.sh";
  std::ofstream(script) << "cat > \"$1\"\nshift\nprintf '%s\\n' \"$@\" > \"$0.args\"\n";
  config::CommandHookConfig hook{"/bin/sh", {script.string(), out.string(), "$(id)", "a b;c"}, 10};
  const HookOutcome outcome = RunCommandHook(hook, kAlarm);
  EXPECT_TRUE(outcome.started) << outcome.error;
  EXPECT_TRUE(outcome.exited);
  EXPECT_EQ(outcome.exit_code, 0);
  EXPECT_EQ(ReadText(out), kAlarm);
  EXPECT_EQ(ReadText(script.string() + ".args"), "$(id)\na b;c\n");
  EXPECT_EQ(outcome.Describe(10), "exited with status 0");
}

TEST(CommandHook, ANonZeroExitStatusIsReported) {
  // POSIX `false` exits with a non-zero status; coreutils' with 1.
  config::CommandHookConfig hook{"/bin/false", {}, 10};
  const HookOutcome outcome = RunCommandHook(hook, kAlarm);
  EXPECT_TRUE(outcome.exited);
  EXPECT_EQ(outcome.exit_code, 1);
}

TEST(CommandHook, AProgramOutlivingItsTimeoutIsKilled) {
  config::CommandHookConfig hook{"/bin/sleep", {"60"}, 0.3};
  const auto start = std::chrono::steady_clock::now();
  const HookOutcome outcome = RunCommandHook(hook, kAlarm);
  const auto took = std::chrono::steady_clock::now() - start;
  EXPECT_TRUE(outcome.timed_out);
  EXPECT_FALSE(outcome.exited);
  EXPECT_EQ(outcome.signal, SIGKILL);
  EXPECT_LT(took, std::chrono::seconds(30));  // far below the program's own 60 s
  EXPECT_EQ(outcome.Describe(0.3), "killed after the 0.3 s timeout");
}

TEST(CommandHook, AProgramThatIgnoresItsInputStillEndsCleanly) {
  // `true` exits at once without reading: writing to the closed pipe must not kill the daemon.
  std::string big(1 << 20, 'x');
  config::CommandHookConfig hook{"/bin/true", {}, 10};
  const HookOutcome outcome = RunCommandHook(hook, big);
  EXPECT_TRUE(outcome.exited);
  EXPECT_EQ(outcome.exit_code, 0);
}

TEST(CommandHook, AMissingProgramIsNamed) {
  config::CommandHookConfig hook{"/nonexistent/larkfield-sms", {}, 10};
  const HookOutcome outcome = RunCommandHook(hook, kAlarm);
  EXPECT_FALSE(outcome.started);
  EXPECT_NE(outcome.Describe(10).find("/nonexistent/larkfield-sms"), std::string::npos);
  EXPECT_NE(outcome.Describe(10).find("No such file"), std::string::npos);
}

TEST(CommandHook, TheRunnerRunsEachAlarmAndLogsItsOutcome) {
  std::mutex mutex;
  std::vector<std::string> lines;
  {
    CommandHookRunner runner({"/bin/cat", {}, 10},
                             [&](const std::string& level, const std::string& message) {
                               std::lock_guard lock(mutex);
                               lines.push_back(level + " " + message);
                             });
    runner.Enqueue("a1-1", kAlarm);
    runner.Enqueue("a1-2", kAlarm);
  }  // the destructor runs what is queued
  ASSERT_EQ(lines.size(), 2u);
  EXPECT_EQ(lines[0], "info command hook /bin/cat for alarm a1-1: exited with status 0");
  EXPECT_EQ(lines[1], "info command hook /bin/cat for alarm a1-2: exited with status 0");
}

}  // namespace
}  // namespace spinward::daemon
