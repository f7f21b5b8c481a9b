#include "spinward/daemon/outbox_notifier.h"

namespace spinward::daemon {

void OutboxNotifier::Notify() {
  std::lock_guard lock(mutex_);
  if (listener_) listener_();
}

void OutboxNotifier::Listen(std::function<void()> listener) {
  std::lock_guard lock(mutex_);
  listener_ = std::move(listener);
}

}  // namespace spinward::daemon
