#include "support/test_paths.h"

#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <cstdio>
#include <fstream>
#include <sstream>

namespace spinward::testing {

std::filesystem::path SourceDir() { return SPINWARD_SOURCE_DIR; }
std::filesystem::path BinaryDir() { return SPINWARD_BINARY_DIR; }
std::filesystem::path TestDataDir() { return SourceDir() / "tests" / "data"; }
std::filesystem::path SpinwardBinary() { return BinaryDir() / "daemon" / "spinward"; }
std::string ReferencePython() { return SPINWARD_REFERENCE_PYTHON; }

std::filesystem::path FreshTempDir(const std::string& name) {
  auto dir = std::filesystem::temp_directory_path() /
             ("spinward-test-" + std::to_string(::getpid()) + "-" + name);
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir;
}

CommandResult RunCommand(const std::string& command_line) {
  CommandResult result;
  auto err_file = std::filesystem::temp_directory_path() /
                  ("spinward-stderr-" + std::to_string(::getpid()) + ".txt");
  std::string full = command_line + " 2>" + err_file.string();
  FILE* pipe = ::popen(full.c_str(), "r");
  if (pipe == nullptr) return result;
  std::array<char, 4096> chunk{};
  std::size_t n = 0;
  while ((n = std::fread(chunk.data(), 1, chunk.size(), pipe)) > 0) result.output.append(chunk.data(), n);
  int status = ::pclose(pipe);
  result.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  std::ifstream err(err_file);
  std::stringstream buffer;
  buffer << err.rdbuf();
  result.error_output = buffer.str();
  std::filesystem::remove(err_file);
  return result;
}

}  // namespace spinward::testing
