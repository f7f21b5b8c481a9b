#include "option_reader.h"

#include <cerrno>
#include <cmath>
#include <cstdlib>

namespace spinward::daemon {

Result<OptionReader> OptionReader::Parse(const Arguments& args, const std::set<std::string>& valued,
                                         const std::set<std::string>& flags) {
  OptionReader reader;
  for (std::size_t i = 0; i < args.size(); ++i) {
    const std::string& arg = args[i];
    if (arg.rfind("--", 0) != 0 || arg == "--") {
      reader.positional_.push_back(arg);
      continue;
    }
    std::string name = arg;
    std::optional<std::string> inline_value;
    if (auto eq = arg.find('='); eq != std::string::npos) {
      name = arg.substr(0, eq);
      inline_value = arg.substr(eq + 1);
    }
    if (flags.count(name)) {
      if (inline_value) return Error{name + " takes no value"};
      reader.flags_.insert(name);
    } else if (valued.count(name)) {
      if (inline_value) {
        reader.values_.emplace(name, *inline_value);
      } else if (i + 1 < args.size()) {
        reader.values_.emplace(name, args[++i]);
      } else {
        return Error{name + " needs a value"};
      }
    } else {
      return Error{"unknown option " + name + " (--help lists the options)"};
    }
  }
  return reader;
}

std::optional<std::string> OptionReader::Value(const std::string& name) const {
  auto range = values_.equal_range(name);
  if (range.first == range.second) return std::nullopt;
  return std::prev(range.second)->second;  // the last one given wins
}

std::vector<std::string> OptionReader::Values(const std::string& name) const {
  std::vector<std::string> all;
  auto range = values_.equal_range(name);
  for (auto it = range.first; it != range.second; ++it) all.push_back(it->second);
  return all;
}

Result<double> OptionReader::Number(const std::string& name, double fallback) const {
  auto text = Value(name);
  if (!text) return fallback;
  errno = 0;
  char* end = nullptr;
  double value = std::strtod(text->c_str(), &end);
  if (end == text->c_str() || *end != '\0' || errno == ERANGE || !std::isfinite(value)) {
    return Error{name + " '" + *text + "': not a number"};
  }
  return value;
}

Result<long long> OptionReader::Integer(const std::string& name, long long fallback, long long min,
                                        long long max) const {
  auto text = Value(name);
  if (!text) return fallback;
  errno = 0;
  char* end = nullptr;
  long long value = std::strtoll(text->c_str(), &end, 10);
  if (end == text->c_str() || *end != '\0' || errno == ERANGE) {
    return Error{name + " '" + *text + "': not a whole number"};
  }
  if (value < min || value > max) {
    return Error{name + " '" + *text + "': must be between " + std::to_string(min) + " and " +
                 std::to_string(max)};
  }
  return value;
}

}  // namespace spinward::daemon
