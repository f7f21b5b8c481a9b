// Private to config/: typed reading of one YAML mapping with every problem collected, so the site
// loader reads like a list of keys. A MapReader checks on construction that the node is a mapping,
// that each key is known (suggesting the nearest known key otherwise) and given once; its getters
// then read one key each, reporting a missing required key at the mapping and a bad value at the
// value. A getter returns true only when it stored a value taken as written.
// Thread-safety: one reader per thread; it writes to the ProblemList it was given.
#pragma once

#include <yaml-cpp/yaml.h>

#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/config/config_problem.h"
#include "spinward/estimators/result.h"

namespace spinward::config::internal {

class ProblemList {
 public:
  explicit ProblemList(std::string file) : file_(std::move(file)) {}

  void Add(const YAML::Mark& mark, std::string key, std::string problem);
  const std::string& file() const { return file_; }
  // Sorted by line and column, exact repeats removed (a profile shared by many points would
  // otherwise repeat its problem once per point).
  std::vector<ConfigProblem> Take();

 private:
  std::string file_;
  std::vector<ConfigProblem> problems_;
};

enum class Need { kOptional, kRequired };

// "a mapping", "a list", "a value", "nothing" for the problem texts.
std::string_view DescribeNodeType(const YAML::Node& node);
// 'text', for naming a value in a problem.
std::string QuoteValue(std::string_view text);

class MapReader {
 public:
  MapReader(ProblemList& problems, const YAML::Node& node, std::string path,
            std::span<const std::string_view> known_keys);

  bool is_map() const { return is_map_; }
  const std::string& path() const { return path_; }
  YAML::Mark mark() const { return mark_; }

  bool Has(std::string_view key) const { return Find(key) != nullptr; }
  // The value node of a key, or null when the key is absent.
  const YAML::Node* Find(std::string_view key) const;
  std::string KeyPath(std::string_view key) const;
  // Where a key's value sits; the mapping's own place when the key is absent.
  YAML::Mark ValueMark(std::string_view key) const;
  void Report(std::string_view key, std::string problem);
  // Reports a required key that is absent. Returns true when present.
  bool Require(std::string_view key);

  bool ReadString(std::string_view key, std::string& out, Need need);
  // A finite number.
  bool ReadNumber(std::string_view key, double& out, Need need);
  // true or false (also True/TRUE, False/FALSE); YAML 1.1's yes/no/on/off are refused.
  bool ReadBool(std::string_view key, bool& out, Need need);
  // A whole number >= 0 that fits in size_t.
  bool ReadCount(std::string_view key, std::size_t& out, Need need);
  // A whole number that fits in long long.
  bool ReadInteger(std::string_view key, long long& out, Need need);
  // A list of text values. When some items are not text, returns false with `out` holding an empty
  // text in their place, so the good ones can still be checked.
  bool ReadStringList(std::string_view key, std::vector<std::string>& out, Need need);
  // The elements of a list value (empty, with a problem, when it is not a list).
  std::vector<YAML::Node> ReadList(std::string_view key, Need need);

  // A text value run through a parser that returns Result<T>; the parser's message is reported
  // against the key.
  template <typename T, typename Parser>
  bool ReadParsed(std::string_view key, T& out, Need need, Parser parse) {
    std::string text;
    if (!ReadString(key, text, need)) return false;
    auto parsed = parse(text);
    if (!parsed.ok()) {
      Report(key, parsed.message());
      return false;
    }
    out = *std::move(parsed);
    return true;
  }

 private:
  struct Entry {
    std::string key;
    YAML::Node value;
  };
  const YAML::Node* Present(std::string_view key, Need need);
  std::optional<std::string> Scalar(std::string_view key, const YAML::Node& value,
                                    std::string_view expected);

  ProblemList& problems_;
  std::string path_;
  YAML::Mark mark_;
  bool is_map_ = false;
  std::vector<Entry> entries_;
};

// Parses a whole number or a finite number from YAML scalar text: no trailing characters.
std::optional<long long> ParseWholeNumber(std::string_view text);
std::optional<double> ParseFiniteNumber(std::string_view text);

}  // namespace spinward::config::internal
