// The known name closest to a mistyped one, for "did you mean ...?" hints on unknown keys and
// unknown ids. Closeness is the Levenshtein edit distance (insertions, deletions, substitutions),
// and a candidate counts only when it is close enough that the hint is likely right: at most a
// third of the longer name's length, and at least 1 edit is always allowed. Thread-safety: pure
// functions.
#pragma once

#include <cstddef>
#include <optional>
#include <span>
#include <string>
#include <string_view>

namespace spinward::config {

std::size_t EditDistance(std::string_view a, std::string_view b);

// The first of the nearest candidates, or none when none is close enough.
std::optional<std::string> NearestKey(std::string_view typed,
                                      std::span<const std::string_view> candidates);
std::optional<std::string> NearestKey(std::string_view typed,
                                      std::span<const std::string> candidates);

}  // namespace spinward::config
