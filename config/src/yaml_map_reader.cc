#include "yaml_map_reader.h"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <limits>
#include <tuple>

#include "spinward/config/nearest_key.h"

namespace spinward::config::internal {
namespace {

// yaml-cpp marks are 0-based; editors count from 1. A null mark (a node built in memory) has no
// place.
int OneBased(int value) { return value < 0 ? 0 : value + 1; }

}  // namespace

void ProblemList::Add(const YAML::Mark& mark, std::string key, std::string problem) {
  problems_.push_back(ConfigProblem{file_, mark.is_null() ? 0 : OneBased(mark.line),
                                    mark.is_null() ? 0 : OneBased(mark.column), std::move(key),
                                    std::move(problem)});
}

std::vector<ConfigProblem> ProblemList::Take() {
  auto order = [](const ConfigProblem& p) { return std::tie(p.line, p.column, p.key, p.problem); };
  std::stable_sort(
      problems_.begin(), problems_.end(),
      [&](const ConfigProblem& a, const ConfigProblem& b) { return order(a) < order(b); });
  problems_.erase(std::unique(problems_.begin(), problems_.end(),
                              [&](const ConfigProblem& a, const ConfigProblem& b) {
                                return order(a) == order(b);
                              }),
                  problems_.end());
  return std::move(problems_);
}

std::string_view DescribeNodeType(const YAML::Node& node) {
  switch (node.Type()) {
    case YAML::NodeType::Map:
      return "a mapping";
    case YAML::NodeType::Sequence:
      return "a list";
    case YAML::NodeType::Scalar:
      return "a single value";
    case YAML::NodeType::Null:
    case YAML::NodeType::Undefined:
      break;
  }
  return "nothing";
}

std::string QuoteValue(std::string_view text) { return "'" + std::string(text) + "'"; }

std::optional<long long> ParseWholeNumber(std::string_view text) {
  if (!text.empty() && text.front() == '+') text.remove_prefix(1);
  long long value = 0;
  auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (error != std::errc() || end != text.data() + text.size() || text.empty()) return std::nullopt;
  return value;
}

std::optional<double> ParseFiniteNumber(std::string_view text) {
  if (!text.empty() && text.front() == '+') text.remove_prefix(1);
  double value = 0.0;
  auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (error != std::errc() || end != text.data() + text.size() || text.empty() ||
      !std::isfinite(value)) {
    return std::nullopt;
  }
  return value;
}

MapReader::MapReader(ProblemList& problems, const YAML::Node& node, std::string path,
                     std::span<const std::string_view> known_keys)
    : problems_(problems), path_(std::move(path)), mark_(node.Mark()) {
  if (!node.IsMap()) {
    problems_.Add(mark_, path_,
                  "expected a mapping of keys, got " + std::string(DescribeNodeType(node)));
    return;
  }
  is_map_ = true;
  for (const auto& pair : node) {
    const YAML::Node& key_node = pair.first;
    if (!key_node.IsScalar()) {
      problems_.Add(key_node.Mark(), path_,
                    "a key must be a single word, got " + std::string(DescribeNodeType(key_node)));
      continue;
    }
    const std::string& key = key_node.Scalar();
    std::string key_path = KeyPath(key);
    if (std::find(known_keys.begin(), known_keys.end(), key) == known_keys.end()) {
      std::string problem = "unknown key";
      if (auto nearest = NearestKey(key, known_keys))
        problem += "; did you mean '" + *nearest + "'?";
      problems_.Add(key_node.Mark(), key_path, std::move(problem));
      continue;
    }
    auto same = std::find_if(entries_.begin(), entries_.end(),
                             [&](const Entry& entry) { return entry.key == key; });
    if (same != entries_.end()) {
      problems_.Add(key_node.Mark(), key_path,
                    "key given twice (first at line " +
                        std::to_string(OneBased(same->value.Mark().line)) + ")");
      continue;
    }
    entries_.push_back(Entry{key, pair.second});
  }
}

const YAML::Node* MapReader::Find(std::string_view key) const {
  for (const auto& entry : entries_) {
    if (entry.key == key) return &entry.value;
  }
  return nullptr;
}

std::string MapReader::KeyPath(std::string_view key) const {
  return path_.empty() ? std::string(key) : path_ + "." + std::string(key);
}

YAML::Mark MapReader::ValueMark(std::string_view key) const {
  const YAML::Node* value = Find(key);
  return value != nullptr ? value->Mark() : mark_;
}

void MapReader::Report(std::string_view key, std::string problem) {
  problems_.Add(ValueMark(key), KeyPath(key), std::move(problem));
}

bool MapReader::Require(std::string_view key) {
  if (Find(key) != nullptr) return true;
  if (is_map_) problems_.Add(mark_, KeyPath(key), "required key is missing");
  return false;
}

const YAML::Node* MapReader::Present(std::string_view key, Need need) {
  if (need == Need::kRequired && !Require(key)) return nullptr;
  return Find(key);
}

std::optional<std::string> MapReader::Scalar(std::string_view key, const YAML::Node& value,
                                             std::string_view expected) {
  if (!value.IsScalar()) {
    Report(key,
           "expected " + std::string(expected) + ", got " + std::string(DescribeNodeType(value)));
    return std::nullopt;
  }
  return value.Scalar();
}

bool MapReader::ReadString(std::string_view key, std::string& out, Need need) {
  const YAML::Node* value = Present(key, need);
  if (value == nullptr) return false;
  auto text = Scalar(key, *value, "a text value");
  if (!text) return false;
  if (text->empty()) {
    Report(key, "must not be empty");
    return false;
  }
  out = *std::move(text);
  return true;
}

bool MapReader::ReadNumber(std::string_view key, double& out, Need need) {
  const YAML::Node* value = Present(key, need);
  if (value == nullptr) return false;
  auto text = Scalar(key, *value, "a number");
  if (!text) return false;
  auto number = ParseFiniteNumber(*text);
  if (!number) {
    Report(key, "expected a number, got " + QuoteValue(*text));
    return false;
  }
  out = *number;
  return true;
}

bool MapReader::ReadInteger(std::string_view key, long long& out, Need need) {
  const YAML::Node* value = Present(key, need);
  if (value == nullptr) return false;
  auto text = Scalar(key, *value, "a whole number");
  if (!text) return false;
  auto number = ParseWholeNumber(*text);
  if (!number) {
    Report(key, "expected a whole number, got " + QuoteValue(*text));
    return false;
  }
  out = *number;
  return true;
}

bool MapReader::ReadBool(std::string_view key, bool& out, Need need) {
  const YAML::Node* value = Present(key, need);
  if (value == nullptr) return false;
  auto text = Scalar(key, *value, "true or false");
  if (!text) return false;
  if (*text == "true" || *text == "True" || *text == "TRUE") {
    out = true;
    return true;
  }
  if (*text == "false" || *text == "False" || *text == "FALSE") {
    out = false;
    return true;
  }
  Report(key, "expected true or false, got " + QuoteValue(*text));
  return false;
}

bool MapReader::ReadCount(std::string_view key, std::size_t& out, Need need) {
  long long number = 0;
  if (!ReadInteger(key, number, need)) return false;
  if (number < 0) {
    Report(key, "must not be negative, got " + std::to_string(number));
    return false;
  }
  out = static_cast<std::size_t>(number);
  return true;
}

bool MapReader::ReadStringList(std::string_view key, std::vector<std::string>& out, Need need) {
  const YAML::Node* value = Present(key, need);
  if (value == nullptr) return false;
  if (!value->IsSequence()) {
    Report(key, "expected a list, got " + std::string(DescribeNodeType(*value)));
    return false;
  }
  std::vector<std::string> items;
  bool all_good = true;
  for (std::size_t i = 0; i < value->size(); ++i) {
    const YAML::Node item = (*value)[i];
    std::string item_path = KeyPath(key) + "[" + std::to_string(i) + "]";
    if (!item.IsScalar() || item.Scalar().empty()) {
      problems_.Add(item.Mark(), item_path,
                    item.IsScalar()
                        ? std::string("must not be empty")
                        : "expected a text value, got " + std::string(DescribeNodeType(item)));
      all_good = false;
      items.emplace_back();  // keeps the indices of the good items
      continue;
    }
    items.push_back(item.Scalar());
  }
  out = std::move(items);
  return all_good;
}

std::vector<YAML::Node> MapReader::ReadList(std::string_view key, Need need) {
  const YAML::Node* value = Present(key, need);
  if (value == nullptr) return {};
  if (!value->IsSequence()) {
    Report(key, "expected a list, got " + std::string(DescribeNodeType(*value)));
    return {};
  }
  std::vector<YAML::Node> items;
  for (std::size_t i = 0; i < value->size(); ++i) items.push_back((*value)[i]);
  return items;
}

}  // namespace spinward::config::internal
