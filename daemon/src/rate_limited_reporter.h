// Lets through the first few messages per key in each time window and counts the rest, so a sensor
// that sends a thousand bad frames a second writes a handful of log lines, not a thousand.
// Thread-safety: all members lock.
#pragma once

#include <chrono>
#include <cstdint>
#include <map>
#include <mutex>
#include <string>

namespace spinward::daemon {

class RateLimitedReporter {
 public:
  RateLimitedReporter(std::size_t per_window = 5,
                      std::chrono::steady_clock::duration window = std::chrono::seconds(60))
      : per_window_(per_window), window_(window) {}

  // Returns true when this message may be written now; `suppressed` then holds how many messages of
  // this key were held back since the last one written.
  bool Allow(const std::string& key, std::chrono::steady_clock::time_point now,
             std::uint64_t* suppressed) {
    std::lock_guard lock(mutex_);
    auto& slot = slots_[key];
    if (now - slot.window_start >= window_) {
      slot.window_start = now;
      slot.written = 0;
    }
    if (slot.written < per_window_) {
      ++slot.written;
      *suppressed = slot.suppressed;
      slot.suppressed = 0;
      return true;
    }
    ++slot.suppressed;
    return false;
  }

 private:
  struct Slot {
    std::chrono::steady_clock::time_point window_start{};
    std::size_t written = 0;
    std::uint64_t suppressed = 0;
  };
  std::size_t per_window_;
  std::chrono::steady_clock::duration window_;
  std::mutex mutex_;
  std::map<std::string, Slot> slots_;
};

}  // namespace spinward::daemon
