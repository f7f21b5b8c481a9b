// A small reader for a command's options: `--name VALUE`, `--name=VALUE` and flags, with one clear
// error line for anything unknown or missing. Each command lists the options it knows.
#pragma once

#include <map>
#include <optional>
#include <set>
#include <string>
#include <vector>

#include "commands.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

class OptionReader {
 public:
  // valued: options that take a value; flags: options that do not. Positional arguments are kept.
  static Result<OptionReader> Parse(const Arguments& args, const std::set<std::string>& valued,
                                    const std::set<std::string>& flags);

  bool Has(const std::string& name) const { return values_.count(name) || flags_.count(name); }
  std::optional<std::string> Value(const std::string& name) const;
  std::vector<std::string> Values(const std::string& name) const;  // repeatable options
  const std::vector<std::string>& positional() const { return positional_; }

  // Typed getters: an error names the option and the text it was given.
  Result<double> Number(const std::string& name, double fallback) const;
  Result<long long> Integer(const std::string& name, long long fallback, long long min,
                            long long max) const;

 private:
  std::multimap<std::string, std::string> values_;
  std::set<std::string> flags_;
  std::vector<std::string> positional_;
};

}  // namespace spinward::daemon
