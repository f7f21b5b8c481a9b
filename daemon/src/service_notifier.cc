// With libsystemd (SPINWARD_HAVE_LIBSYSTEMD) the datagrams go through sd_notify(3); without it the
// same protocol is written here (a SOCK_DGRAM send to a path, or to an abstract name when the path
// starts with '@'), so a build without libsystemd still runs under a Type=notify unit.
#include "service_notifier.h"

#include <sys/socket.h>
#include <sys/un.h>
#include <time.h>
#include <unistd.h>

#include <cstdlib>
#include <cstring>

#ifdef SPINWARD_HAVE_LIBSYSTEMD
#include <systemd/sd-daemon.h>
#endif

namespace spinward::daemon {
namespace {

std::optional<std::chrono::microseconds> WatchdogFromEnvironment() {
#ifdef SPINWARD_HAVE_LIBSYSTEMD
  std::uint64_t usec = 0;
  if (sd_watchdog_enabled(0, &usec) > 0 && usec > 0)
    return std::chrono::microseconds(static_cast<std::int64_t>(usec));
  return std::nullopt;
#else
  const char* usec = std::getenv("WATCHDOG_USEC");
  if (usec == nullptr) return std::nullopt;
  if (const char* pid = std::getenv("WATCHDOG_PID");
      pid != nullptr && std::strtoll(pid, nullptr, 10) != ::getpid())
    return std::nullopt;  // the watchdog is meant for another process
  const long long value = std::strtoll(usec, nullptr, 10);
  if (value <= 0) return std::nullopt;
  return std::chrono::microseconds(value);
#endif
}

std::int64_t MonotonicMicroseconds() {
  timespec now{};
  clock_gettime(CLOCK_MONOTONIC, &now);
  return static_cast<std::int64_t>(now.tv_sec) * 1'000'000 + now.tv_nsec / 1000;
}

}  // namespace

ServiceNotifier ServiceNotifier::FromEnvironment() {
  ServiceNotifier notifier;
  if (const char* path = std::getenv("NOTIFY_SOCKET"); path != nullptr)
    notifier.socket_path_ = path;
  if (notifier.enabled()) notifier.watchdog_ = WatchdogFromEnvironment();
  return notifier;
}

void ServiceNotifier::Ready(const std::string& status) { Send("READY=1\nSTATUS=" + status); }

void ServiceNotifier::Reloading() {
  Send("RELOADING=1\nMONOTONIC_USEC=" + std::to_string(MonotonicMicroseconds()));
}

void ServiceNotifier::Stopping() { Send("STOPPING=1"); }

void ServiceNotifier::KeepAlive(std::chrono::steady_clock::time_point now) {
  if (!watchdog_) return;
  if (last_keep_alive_ && now - *last_keep_alive_ < *watchdog_ / 2) return;
  last_keep_alive_ = now;
  Send("WATCHDOG=1");
}

void ServiceNotifier::Send(const std::string& message) const {
  if (!enabled()) return;
#ifdef SPINWARD_HAVE_LIBSYSTEMD
  (void)sd_notify(0, message.c_str());  // best effort: systemd may be gone while we stop
#else
  sockaddr_un address{};
  address.sun_family = AF_UNIX;
  if (socket_path_.size() >= sizeof(address.sun_path)) return;
  std::memcpy(address.sun_path, socket_path_.data(), socket_path_.size());
  socklen_t length = static_cast<socklen_t>(offsetof(sockaddr_un, sun_path) + socket_path_.size());
  if (address.sun_path[0] == '@') address.sun_path[0] = '\0';  // abstract socket name
  const int fd = ::socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC, 0);
  if (fd < 0) return;
  (void)::sendto(fd, message.data(), message.size(), MSG_NOSIGNAL,
                 reinterpret_cast<const sockaddr*>(&address), length);
  ::close(fd);
#endif
}

}  // namespace spinward::daemon
