// Where tests find the source tree, the build tree, the built `spinward` binary and Debian's Python
// with SciPy (the outside reference for the estimator).
#pragma once

#include <filesystem>
#include <string>

namespace spinward::testing {

std::filesystem::path SourceDir();
std::filesystem::path BinaryDir();
std::filesystem::path TestDataDir();       // tests/data
std::filesystem::path SpinwardBinary();    // the built CLI
std::string ReferencePython();             // /usr/bin/python3
// A fresh, empty directory under the system temp dir, unique to this test process and name.
std::filesystem::path FreshTempDir(const std::string& name);

// Runs a command line through /bin/sh, returns its exit code and captured stdout (stderr is kept
// apart in `error_output` when asked, by redirecting it to a file).
struct CommandResult {
  int exit_code = -1;
  std::string output;
  std::string error_output;
};
CommandResult RunCommand(const std::string& command_line);

}  // namespace spinward::testing
