// libFuzzer entry point for the YAML site loader (docs/configuration.md). Beyond "no crash, no
// sanitizer report, no exception escaping": a refused file names at least one problem, each with
// a message, problems come in file order (line, then column), as the loader promises;
// an accepted site is consistent (every point on a known machine, point ids unique).
#include <cstddef>
#include <cstdint>
#include <string_view>

#include "spinward/config/site_loader.h"

namespace {

void Check(bool condition) {
  if (!condition) __builtin_trap();
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size > 1 << 16) return 0;  // site files are small; longer inputs only slow the search
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  const auto loaded = spinward::config::ParseSiteText(text, "fuzz.yaml");
  int last_line = -1;
  int last_column = -1;
  for (const auto& problem : loaded.problems) {
    Check(!problem.problem.empty());
    Check(!problem.ToString().empty());
    Check(problem.line > last_line || (problem.line == last_line && problem.column >= last_column));
    last_line = problem.line;
    last_column = problem.column;
  }
  if (!loaded.ok()) return 0;
  // An accepted site is consistent: every point's machine exists and its id finds the point.
  for (const auto& point : loaded.site.points) {
    Check(loaded.site.FindMachine(point.machine) != nullptr);
    Check(loaded.site.FindPoint(point.id) == &point);
  }
  return 0;
}
