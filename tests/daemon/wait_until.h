// Polling with a deadline for tests that watch another thread or process: no fixed sleeps, and a
// test that waits for something that never happens fails after `timeout` instead of hanging.
#pragma once

#include <chrono>
#include <thread>

namespace spinward::daemon::testing {

template <typename Predicate>
bool WaitUntil(Predicate done, std::chrono::milliseconds timeout = std::chrono::seconds(20)) {
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  while (!done()) {
    if (std::chrono::steady_clock::now() > deadline) return done();
    std::this_thread::sleep_for(std::chrono::milliseconds(1));
  }
  return true;
}

}  // namespace spinward::daemon::testing
