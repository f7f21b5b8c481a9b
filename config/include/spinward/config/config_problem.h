// One thing wrong with a configuration file, located as an editor shows it: file, 1-based line and
// column, the key path in the document (e.g. "points[2].bands[0].hi_hz") and what is wrong, printed
// as `file:line:column: key: problem`. A problem that has no place in the file (an unreadable file)
// has line and column 0 and prints as `file: problem`; one with no key (a YAML syntax error) prints
// as `file:line:column: problem`.
// Thread-safety: plain value.
#pragma once

#include <string>

namespace spinward::config {

struct ConfigProblem {
  std::string file;
  int line = 0;    // 1-based; 0 when the problem has no place in the file
  int column = 0;  // 1-based
  std::string key;
  std::string problem;

  std::string ToString() const;
};

}  // namespace spinward::config
