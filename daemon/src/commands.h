// Entry points of the CLI's commands; each takes the arguments after the command name.
#pragma once

#include <string>
#include <vector>

namespace spinward::daemon {

using Arguments = std::vector<std::string>;

int CommandAck(const Arguments& args);
int CommandAlarms(const Arguments& args);
int CommandAnalyze(const Arguments& args);
int CommandBaseline(const Arguments& args);
int CommandCheckConfig(const Arguments& args);
int CommandDemo(const Arguments& args);
int CommandFeed(const Arguments& args);
int CommandReplay(const Arguments& args);
int CommandReport(const Arguments& args);
int CommandRun(const Arguments& args);
int CommandStatus(const Arguments& args);
int CommandTrend(const Arguments& args);

}  // namespace spinward::daemon
