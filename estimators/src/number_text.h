// Numbers in error messages: the shortest text that reads back as the same double, so a message
// shows exactly the value the caller passed (0.1 stays "0.1", NaN shows as "nan").
#pragma once

#include <charconv>
#include <string>

namespace spinward::estimators {

inline std::string NumberText(double value) {
  char buffer[64];
  auto [end, ec] = std::to_chars(buffer, buffer + sizeof(buffer), value);
  if (ec != std::errc()) return std::to_string(value);
  return std::string(buffer, end);
}

}  // namespace spinward::estimators
