#include "spinward/storage/time_text.h"

#include <charconv>
#include <chrono>
#include <cstdio>

namespace spinward::storage {
namespace {

constexpr std::int64_t kSecondNs = 1000000000LL;

Error Bad(std::string_view text) {
  return Error{
      "time '" + std::string(text) +
      "' is neither ISO 8601 UTC (2026-03-02T10:00:00Z, 2026-03-02T10:00Z, 2026-03-02) nor "
      "relative to now (90s, 30m, 24h, 7d, 2w, now)"};
}

// Reads exactly `width` digits at `at`.
bool Digits(std::string_view text, std::size_t at, std::size_t width, int& out) {
  if (at + width > text.size()) return false;
  auto [end, ec] = std::from_chars(text.data() + at, text.data() + at + width, out);
  return ec == std::errc() && end == text.data() + at + width;
}

}  // namespace

std::int64_t WallClockNowNs() {
  return std::chrono::duration_cast<std::chrono::nanoseconds>(
             std::chrono::system_clock::now().time_since_epoch())
      .count();
}

Result<std::int64_t> ParseTimeArgument(std::string_view text, std::int64_t now_ns) {
  if (text == "now") return now_ns;
  if (text.empty()) return Bad(text);
  // Relative: digits then one unit letter.
  char unit = text.back();
  if (text.size() >= 2 && std::string_view("smhdw").find(unit) != std::string_view::npos &&
      text.find_first_not_of("0123456789") == text.size() - 1) {
    std::int64_t count = 0;
    auto [end, ec] = std::from_chars(text.data(), text.data() + text.size() - 1, count);
    if (ec != std::errc() || end != text.data() + text.size() - 1) return Bad(text);
    std::int64_t seconds = unit == 's'   ? 1
                           : unit == 'm' ? 60
                           : unit == 'h' ? 3600
                           : unit == 'd' ? 86400
                                         : 604800;
    if (count > INT64_MAX / (seconds * kSecondNs)) return Bad(text);
    return now_ns - count * seconds * kSecondNs;
  }
  // Absolute: YYYY-MM-DD[THH:MM[:SS[.fff]]][Z]
  int year = 0, month = 0, day = 0, hour = 0, minute = 0, second = 0;
  if (!Digits(text, 0, 4, year) || text.size() < 10 || text[4] != '-' ||
      !Digits(text, 5, 2, month) || text[7] != '-' || !Digits(text, 8, 2, day)) {
    return Bad(text);
  }
  std::size_t at = 10;
  std::int64_t fraction_ns = 0;
  if (at < text.size() && (text[at] == 'T' || text[at] == ' ')) {
    if (!Digits(text, at + 1, 2, hour) || at + 3 >= text.size() || text[at + 3] != ':' ||
        !Digits(text, at + 4, 2, minute)) {
      return Bad(text);
    }
    at += 6;
    if (at < text.size() && text[at] == ':') {
      if (!Digits(text, at + 1, 2, second)) return Bad(text);
      at += 3;
      if (at < text.size() && text[at] == '.') {
        ++at;
        std::int64_t scale = kSecondNs / 10;
        std::size_t first = at;
        while (at < text.size() && text[at] >= '0' && text[at] <= '9') {
          fraction_ns += (text[at] - '0') * scale;
          scale /= 10;
          ++at;
        }
        if (at == first) return Bad(text);
      }
    }
  }
  if (at < text.size() && text[at] == 'Z') ++at;
  if (at != text.size()) return Bad(text);
  using namespace std::chrono;
  year_month_day date{std::chrono::year(year), std::chrono::month(static_cast<unsigned>(month)),
                      std::chrono::day(static_cast<unsigned>(day))};
  if (!date.ok() || hour > 23 || minute > 59 || second > 60) {
    return Error{"time '" + std::string(text) + "' is not a valid date and time of day"};
  }
  std::int64_t days = sys_days(date).time_since_epoch().count();
  std::int64_t seconds = days * 86400 + hour * 3600 + minute * 60 + second;
  return seconds * kSecondNs + fraction_ns;
}

std::string FormatIsoUtc(std::int64_t ns) {
  using namespace std::chrono;
  std::int64_t seconds = ns / kSecondNs;
  std::int64_t rest = ns % kSecondNs;
  if (rest < 0) {
    rest += kSecondNs;
    seconds -= 1;
  }
  std::int64_t days = seconds / 86400;
  std::int64_t in_day = seconds % 86400;
  if (in_day < 0) {
    in_day += 86400;
    days -= 1;
  }
  year_month_day date{sys_days(std::chrono::days(days))};
  char buf[48];
  int n = std::snprintf(buf, sizeof buf, "%04d-%02u-%02uT%02d:%02d:%02d",
                        static_cast<int>(date.year()), static_cast<unsigned>(date.month()),
                        static_cast<unsigned>(date.day()), static_cast<int>(in_day / 3600),
                        static_cast<int>(in_day / 60 % 60), static_cast<int>(in_day % 60));
  std::string out(buf, static_cast<std::size_t>(n));
  if (rest != 0) {
    std::snprintf(buf, sizeof buf, ".%03d", static_cast<int>(rest / 1000000));
    out += buf;
  }
  return out + "Z";
}

}  // namespace spinward::storage
