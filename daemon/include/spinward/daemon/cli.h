// The command-line interface: `spinward COMMAND [options]`. Each command lives in its own
// daemon/src/command_<name>.cc and is listed once in cli.cc's table.
// Thread-safety: called once from main.
#pragma once

namespace spinward::daemon {

// Returns the process exit code: 0 on success, 1 on a runtime failure, 2 on a usage error.
int RunCli(int argc, char** argv);

}  // namespace spinward::daemon
