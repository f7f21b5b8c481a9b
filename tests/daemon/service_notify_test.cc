// `spinward run` under a service manager's eye: the test plays systemd. It binds a unix datagram
// socket, starts the real binary with NOTIFY_SOCKET naming it and WATCHDOG_USEC set, and reads the
// messages while the daemon starts, reloads on SIGHUP and stops on SIGTERM.
//
// Expected messages (sd_notify(3) and systemd.service(5), systemd 252-254): "READY=1" once start-up
// is done; "WATCHDOG=1" at least once per WATCHDOG_USEC ("it is recommended to send a keep-alive
// notification every half of the time returned here"); "RELOADING=1" when a reload begins,
// followed by "READY=1" when it is done, where systemd 253+ also wants "MONOTONIC_USEC=" with the
// CLOCK_MONOTONIC time of the reload; "STOPPING=1" when the service begins to stop.
#include <fcntl.h>
#include <signal.h>
#include <spawn.h>
#include <sys/socket.h>
#include <sys/un.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include <gtest/gtest.h>

#include <arpa/inet.h>
#include <netinet/in.h>

#include <cstring>
#include <fstream>
#include <regex>
#include <sstream>

#include "daemon/wait_until.h"
#include "support/test_paths.h"

extern char** environ;

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::SpinwardBinary;
using spinward::testing::TestDataDir;
using testing::WaitUntil;

std::int64_t MonotonicMicroseconds() {
  timespec now{};
  clock_gettime(CLOCK_MONOTONIC, &now);
  return static_cast<std::int64_t>(now.tv_sec) * 1'000'000 + now.tv_nsec / 1000;
}

// The service manager's end of the notification socket: every datagram received, in order.
class NotifySocket {
 public:
  explicit NotifySocket(const fs::path& path) : path_(path) {
    fd_ = ::socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC | SOCK_NONBLOCK, 0);
    sockaddr_un address{};
    address.sun_family = AF_UNIX;
    std::strncpy(address.sun_path, path.c_str(), sizeof(address.sun_path) - 1);
    bound_ = fd_ >= 0 && path.string().size() < sizeof(address.sun_path) &&
             ::bind(fd_, reinterpret_cast<sockaddr*>(&address), sizeof(address)) == 0;
  }
  ~NotifySocket() {
    if (fd_ >= 0) ::close(fd_);
  }
  bool bound() const { return bound_; }

  // Everything received so far, one entry per datagram.
  const std::vector<std::string>& Messages() {
    char buffer[4096];
    for (;;) {
      const ssize_t n = ::recv(fd_, buffer, sizeof(buffer), 0);
      if (n < 0) break;
      messages_.emplace_back(buffer, static_cast<std::size_t>(n));
    }
    return messages_;
  }
  std::size_t Count(const std::string& line) {
    std::size_t count = 0;
    for (const auto& m : Messages())
      if (("\n" + m + "\n").find("\n" + line + "\n") != std::string::npos) ++count;
    return count;
  }
  bool WaitFor(const std::string& line, std::size_t times = 1) {
    return WaitUntil([&] { return Count(line) >= times; });
  }

 private:
  fs::path path_;
  int fd_ = -1;
  bool bound_ = false;
  std::vector<std::string> messages_;
};

std::string ReadText(const fs::path& path) {
  std::ifstream in(path);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

bool TcpConnects(int port) {
  const int fd = ::socket(AF_INET, SOCK_STREAM | SOCK_CLOEXEC, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_port = htons(static_cast<std::uint16_t>(port));
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  const bool ok = ::connect(fd, reinterpret_cast<sockaddr*>(&address), sizeof(address)) == 0;
  ::close(fd);
  return ok;
}

TEST(ServiceNotify, ReadyWatchdogReloadAndStopReachTheNotifySocket) {
  const fs::path dir = spinward::testing::FreshTempDir("notify");
  NotifySocket manager(dir / "notify.sock");
  ASSERT_TRUE(manager.bound()) << dir;
  const fs::path ready = dir / "ready.json";
  const fs::path log = dir / "daemon.log";

  // The environment systemd gives a Type=notify unit with WatchdogSec=2.
  std::vector<std::string> env = {"NOTIFY_SOCKET=" + (dir / "notify.sock").string(),
                                  "WATCHDOG_USEC=2000000"};
  for (char** e = environ; *e != nullptr; ++e) {
    const std::string var = *e;
    if (var.rfind("NOTIFY_SOCKET=", 0) != 0 && var.rfind("WATCHDOG_", 0) != 0) env.push_back(var);
  }
  std::vector<std::string> args = {SpinwardBinary().string(),
                                   "run",
                                   "--config",
                                   (TestDataDir() / "daemon" / "run_site.yaml").string(),
                                   "--ready-file",
                                   ready.string(),
                                   "--workers",
                                   "1"};
  std::vector<char*> argv, envp;
  for (auto& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  for (auto& e : env) envp.push_back(e.data());
  envp.push_back(nullptr);
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, 2, log.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
  posix_spawn_file_actions_addchdir_np(&actions, dir.c_str());
  pid_t pid = -1;
  ASSERT_EQ(posix_spawn(&pid, argv[0], &actions, nullptr, argv.data(), envp.data()), 0);
  posix_spawn_file_actions_destroy(&actions);
  struct Reaper {
    pid_t pid;
    ~Reaper() {
      if (::waitpid(pid, nullptr, WNOHANG) == 0) {
        ::kill(pid, SIGKILL);
        ::waitpid(pid, nullptr, 0);
      }
    }
  } reaper{pid};

  // READY=1 only once the listeners accept: the TCP port in the ready file takes a connection.
  ASSERT_TRUE(manager.WaitFor("READY=1")) << ReadText(log);
  std::smatch m;
  const std::string bound = ReadText(ready);
  ASSERT_TRUE(std::regex_search(bound, m, std::regex("\"transport\":\"tcp\",\"port\":([0-9]+)")))
      << bound;
  EXPECT_TRUE(TcpConnects(std::stoi(m[1])));
  EXPECT_EQ(manager.Count("STOPPING=1"), 0u);

  // Keep-alives keep coming while the daemon idles: at least every 2 s, so three within 20 s.
  EXPECT_TRUE(manager.WaitFor("WATCHDOG=1", 3)) << ReadText(log);

  // SIGHUP: RELOADING=1 with a CLOCK_MONOTONIC time taken between the signal and now, then READY=1.
  const std::int64_t before_hup = MonotonicMicroseconds();
  ::kill(pid, SIGHUP);
  ASSERT_TRUE(manager.WaitFor("READY=1", 2)) << ReadText(log);
  const std::int64_t after_ready = MonotonicMicroseconds();
  const auto& messages = manager.Messages();
  std::size_t reloading = messages.size(), second_ready = messages.size(), seen_ready = 0;
  for (std::size_t i = 0; i < messages.size(); ++i) {
    if (messages[i].rfind("RELOADING=1", 0) == 0 && reloading == messages.size()) reloading = i;
    if (messages[i].rfind("READY=1", 0) == 0 && ++seen_ready == 2) second_ready = i;
  }
  ASSERT_LT(reloading, messages.size()) << "no RELOADING=1";
  EXPECT_LT(reloading, second_ready) << "RELOADING=1 must come before the READY=1 that ends it";
  ASSERT_TRUE(std::regex_search(messages[reloading], m, std::regex("MONOTONIC_USEC=([0-9]+)")))
      << messages[reloading];
  const std::int64_t reload_usec = std::stoll(m[1]);
  EXPECT_GE(reload_usec, before_hup);
  EXPECT_LE(reload_usec, after_ready);

  // SIGTERM: STOPPING=1, then a clean exit.
  ::kill(pid, SIGTERM);
  ASSERT_TRUE(manager.WaitFor("STOPPING=1")) << ReadText(log);
  int status = -1;
  ASSERT_TRUE(WaitUntil([&] { return ::waitpid(pid, &status, WNOHANG) == pid; }));
  EXPECT_TRUE(WIFEXITED(status) && WEXITSTATUS(status) == 0) << ReadText(log);
}

// Without NOTIFY_SOCKET (started by hand) nothing is sent and nothing changes: every other test
// in tests/daemon/run_command_test.cc runs the daemon that way.

}  // namespace
}  // namespace spinward::daemon
