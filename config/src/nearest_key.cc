#include "spinward/config/nearest_key.h"

#include <algorithm>
#include <vector>

namespace spinward::config {
namespace {

template <typename String>
std::optional<std::string> Nearest(std::string_view typed, std::span<const String> candidates) {
  std::optional<std::string> best;
  std::size_t best_distance = 0;
  for (const auto& candidate : candidates) {
    std::string_view name(candidate);
    std::size_t distance = EditDistance(typed, name);
    std::size_t allowed = std::max<std::size_t>(1, std::max(typed.size(), name.size()) / 3);
    if (distance == 0 || distance > allowed) continue;
    if (!best || distance < best_distance) {
      best = std::string(name);
      best_distance = distance;
    }
  }
  return best;
}

}  // namespace

std::size_t EditDistance(std::string_view a, std::string_view b) {
  // One row of the dynamic-programming table at a time: O(|a| |b|) time, O(|b|) memory.
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diagonal = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      std::size_t above = row[j];
      std::size_t substitution = diagonal + (a[i - 1] == b[j - 1] ? 0 : 1);
      row[j] = std::min({above + 1, row[j - 1] + 1, substitution});
      diagonal = above;
    }
  }
  return row[b.size()];
}

std::optional<std::string> NearestKey(std::string_view typed,
                                      std::span<const std::string_view> candidates) {
  return Nearest(typed, candidates);
}

std::optional<std::string> NearestKey(std::string_view typed,
                                      std::span<const std::string> candidates) {
  return Nearest(typed, candidates);
}

}  // namespace spinward::config
