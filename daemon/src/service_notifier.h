// Tells the service manager what `spinward run` is doing: ready, reloading, stopping, and a
// watchdog keep-alive from the main loop. The messages are sd_notify(3)'s: one datagram per
// message to the unix socket named by $NOTIFY_SOCKET, which systemd sets for a Type=notify unit.
// Without that variable (started by hand or by a script) every call does nothing, so the daemon
// behaves the same everywhere; the environment is the seam a test uses to read the messages.
// Thread-safety: one thread (the main loop) calls it.
#pragma once

#include <chrono>
#include <optional>
#include <string>

namespace spinward::daemon {

class ServiceNotifier {
 public:
  // Reads $NOTIFY_SOCKET and the watchdog interval ($WATCHDOG_USEC, for this process only when
  // $WATCHDOG_PID names another one).
  static ServiceNotifier FromEnvironment();

  bool enabled() const { return !socket_path_.empty(); }
  // The watchdog's interval when systemd asks for keep-alives (WatchdogSec=).
  std::optional<std::chrono::microseconds> watchdog_interval() const { return watchdog_; }

  // READY=1 with a one-line status: the listeners are up (also sent after a reload).
  void Ready(const std::string& status);
  // RELOADING=1 with the monotonic time the reload began (what systemd 253+ expects).
  void Reloading();
  void Stopping();
  // WATCHDOG=1, at most every half interval however often it is called.
  void KeepAlive(std::chrono::steady_clock::time_point now);

 private:
  void Send(const std::string& message) const;

  std::string socket_path_;
  std::optional<std::chrono::microseconds> watchdog_;
  std::optional<std::chrono::steady_clock::time_point> last_keep_alive_;
};

}  // namespace spinward::daemon
