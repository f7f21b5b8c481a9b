// Tells the MQTT publisher that the trend writer has just committed alarm events, and so their
// outbox rows, so it sends them at once instead of finding them at its next outbox poll
// (docs/performance.md, "Alarm latency"). The writer's commit callback calls Notify; the publisher
// listens while it runs. Rows written by another process still wait for the poll.
// Shared (std::shared_ptr) by whoever creates the trend backend and the publisher, so neither has
// to outlive the other: the publisher stops listening before it is destroyed.
// Thread-safety: all members from any thread. Listen({}) returns only after a Notify that is
// calling the old listener has finished.
#pragma once

#include <functional>
#include <mutex>

namespace spinward::daemon {

class OutboxNotifier {
 public:
  // Calls the listener, if any (on the caller's thread, so the listener must be quick).
  void Notify();
  // Replaces the listener (one at a time); an empty function stops listening.
  void Listen(std::function<void()> listener);

 private:
  std::mutex mutex_;  // held while the listener runs, so Listen({}) cannot race a running call
  std::function<void()> listener_;
};

}  // namespace spinward::daemon
