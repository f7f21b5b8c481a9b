#include "spinward/daemon/cli.h"

#include <cstdio>
#include <string_view>

#include "commands.h"

namespace spinward::daemon {
namespace {

struct CommandEntry {
  std::string_view name;
  int (*run)(const Arguments&);
  std::string_view summary;
};

constexpr CommandEntry kCommands[] = {
    {"ack", CommandAck, "acknowledge a point's active or latched alarms"},
    {"alarms", CommandAlarms, "list alarm events from the trend database (CSV or JSON)"},
    {"analyze", CommandAnalyze, "compute a Welch PSD and band values from a recording (WAV, CSV, raw)"},
    {"baseline", CommandBaseline, "learn a point's baselines (median, MAD) and limits from its trends"},
    {"check-config", CommandCheckConfig, "check a site file: list its problems or summarise it"},
    {"demo", CommandDemo, "run the built-in demonstration (an invented booster pump station)"},
    {"feed", CommandFeed, "act as an acquisition box: stream frames to a daemon over TCP or UDP"},
    {"replay", CommandReplay, "process a recording through a point's pipeline as if it streamed in"},
    {"report", CommandReport, "write the nightly review: ranking, forecasts, charts (HTML, CSV, text)"},
    {"run", CommandRun, "run the daemon in the foreground with a site configuration"},
    {"status", CommandStatus, "latest value and alarm state of every point (trend database)"},
    {"trend", CommandTrend, "print a measure's trend (raw, hourly, daily) from the trend database"},
};

void PrintUsage(std::FILE* out) {
  std::fprintf(out,
               "usage: spinward COMMAND [options]   (spinward COMMAND --help for a command's options)\n"
               "\nSpinward watches rotating machines: streaming vibration spectra, band trends and\n"
               "advisory alarms. It is not a protection system; site maintenance rules prevail.\n\n"
               "commands:\n");
  for (const auto& command : kCommands) {
    std::fprintf(out, "  %-14s %s\n", std::string(command.name).c_str(),
                 std::string(command.summary).c_str());
  }
}

}  // namespace

int RunCli(int argc, char** argv) {
  if (argc < 2) {
    PrintUsage(stderr);
    return 2;
  }
  std::string_view name = argv[1];
  if (name == "--help" || name == "-h" || name == "help") {
    PrintUsage(stdout);
    return 0;
  }
  if (name == "--version") {
    std::printf("spinward 0.1.0\n");
    return 0;
  }
  Arguments args(argv + 2, argv + argc);
  for (const auto& command : kCommands) {
    if (command.name == name) return command.run(args);
  }
  std::fprintf(stderr, "spinward: unknown command '%s' (spinward --help lists them)\n", argv[1]);
  return 2;
}

}  // namespace spinward::daemon
