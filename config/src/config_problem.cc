#include "spinward/config/config_problem.h"

namespace spinward::config {

std::string ConfigProblem::ToString() const {
  std::string text = file;
  if (line > 0) text += ":" + std::to_string(line) + ":" + std::to_string(column);
  text += ": ";
  if (!key.empty()) text += key + ": ";
  text += problem;
  return text;
}

}  // namespace spinward::config
