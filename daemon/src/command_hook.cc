#include "spinward/daemon/command_hook.h"

#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <vector>

extern char** environ;

namespace spinward::daemon {
namespace {

using Clock = std::chrono::steady_clock;

// Writes `input` to the child's stdin without blocking past the deadline. A child that does not
// read its input (or ends early) is not an error: the pipe is closed and the exit status decides.
void FeedInput(int fd, const std::string& input, Clock::time_point deadline) {
  std::size_t done = 0;
  while (done < input.size() && Clock::now() < deadline) {
    pollfd p{fd, POLLOUT, 0};
    if (::poll(&p, 1, 50) <= 0) continue;
    if (p.revents & (POLLERR | POLLHUP)) return;
    ssize_t n = ::write(fd, input.data() + done, input.size() - done);
    if (n < 0) {
      if (errno == EAGAIN || errno == EINTR) continue;
      return;  // EPIPE: the child closed its input
    }
    done += static_cast<std::size_t>(n);
  }
}

}  // namespace

std::string HookOutcome::Describe(double timeout_s) const {
  if (!started) return "could not start: " + error;
  if (timed_out) {
    char buffer[64];
    std::snprintf(buffer, sizeof buffer, "killed after the %g s timeout", timeout_s);
    return buffer;
  }
  if (exited) return "exited with status " + std::to_string(exit_code);
  return "ended by signal " + std::to_string(signal) + " (" + strsignal(signal) + ")";
}

HookOutcome RunCommandHook(const config::CommandHookConfig& hook, const std::string& input) {
  HookOutcome outcome;
  int pipe_fds[2];
  if (::pipe2(pipe_fds, O_CLOEXEC) != 0) {
    outcome.error = std::string("pipe: ") + std::strerror(errno);
    return outcome;
  }
  // Writing to a pipe the child has closed raises SIGPIPE in this thread: block it here (the
  // write then fails with EPIPE) and take a pending one away afterwards.
  sigset_t pipe_signal, previous;
  sigemptyset(&pipe_signal);
  sigaddset(&pipe_signal, SIGPIPE);
  pthread_sigmask(SIG_BLOCK, &pipe_signal, &previous);

  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_adddup2(&actions, pipe_fds[0], STDIN_FILENO);
  posix_spawn_file_actions_addopen(&actions, STDOUT_FILENO, "/dev/null", O_WRONLY, 0);
  // The child gets default signal handling and an empty mask (the daemon blocks SIGTERM & co.).
  posix_spawnattr_t attributes;
  posix_spawnattr_init(&attributes);
  sigset_t empty, defaults;
  sigemptyset(&empty);
  sigemptyset(&defaults);
  for (int s : {SIGPIPE, SIGTERM, SIGINT, SIGHUP}) sigaddset(&defaults, s);
  posix_spawnattr_setsigmask(&attributes, &empty);
  posix_spawnattr_setsigdefault(&attributes, &defaults);
  posix_spawnattr_setflags(&attributes, POSIX_SPAWN_SETSIGMASK | POSIX_SPAWN_SETSIGDEF);

  std::vector<char*> argv;
  argv.push_back(const_cast<char*>(hook.program.c_str()));
  for (const auto& arg : hook.args) argv.push_back(const_cast<char*>(arg.c_str()));
  argv.push_back(nullptr);
  pid_t pid = 0;
  int rc = posix_spawn(&pid, hook.program.c_str(), &actions, &attributes, argv.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  posix_spawnattr_destroy(&attributes);
  ::close(pipe_fds[0]);
  if (rc != 0) {
    ::close(pipe_fds[1]);
    pthread_sigmask(SIG_SETMASK, &previous, nullptr);
    outcome.error = "'" + hook.program + "': " + std::strerror(rc);
    return outcome;
  }
  outcome.started = true;
  const auto deadline = Clock::now() + std::chrono::duration_cast<Clock::duration>(
                                           std::chrono::duration<double>(hook.timeout_s));
  ::fcntl(pipe_fds[1], F_SETFL, O_NONBLOCK);
  FeedInput(pipe_fds[1], input, deadline);
  ::close(pipe_fds[1]);

  int status = 0;
  for (;;) {
    pid_t done = ::waitpid(pid, &status, WNOHANG);
    if (done == pid) break;
    if (done < 0 && errno != EINTR) break;
    if (Clock::now() >= deadline) {
      ::kill(pid, SIGKILL);
      ::waitpid(pid, &status, 0);
      outcome.timed_out = true;
      break;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  if (WIFEXITED(status)) {
    outcome.exited = true;
    outcome.exit_code = WEXITSTATUS(status);
  } else if (WIFSIGNALED(status)) {
    outcome.signal = WTERMSIG(status);
  }
  timespec zero{0, 0};
  while (sigtimedwait(&pipe_signal, nullptr, &zero) == SIGPIPE) {
  }
  pthread_sigmask(SIG_SETMASK, &previous, nullptr);
  return outcome;
}

CommandHookRunner::CommandHookRunner(config::CommandHookConfig hook, Log log)
    : hook_(std::move(hook)), log_(std::move(log)), thread_([this] { Run(); }) {}

CommandHookRunner::~CommandHookRunner() {
  {
    std::lock_guard lock(mutex_);
    stop_ = true;
  }
  wake_.notify_all();
  thread_.join();
}

void CommandHookRunner::Enqueue(std::string event_id, std::string payload) {
  {
    std::lock_guard lock(mutex_);
    if (queue_.size() >= kMaxQueued) {
      ++failures_;
      if (log_) {
        log_("error", "command hook: " + std::to_string(kMaxQueued) +
                          " alarms already waiting; not running it for " + event_id);
      }
      return;
    }
    queue_.emplace_back(std::move(event_id), std::move(payload));
  }
  wake_.notify_one();
}

std::uint64_t CommandHookRunner::runs() const {
  std::lock_guard lock(mutex_);
  return runs_;
}

std::uint64_t CommandHookRunner::failures() const {
  std::lock_guard lock(mutex_);
  return failures_;
}

void CommandHookRunner::Run() {
  for (;;) {
    std::pair<std::string, std::string> item;
    {
      std::unique_lock lock(mutex_);
      wake_.wait(lock, [&] { return stop_ || !queue_.empty(); });
      if (queue_.empty()) return;  // stopping, nothing left
      item = std::move(queue_.front());
      queue_.pop_front();
    }
    const HookOutcome outcome = RunCommandHook(hook_, item.second);
    const bool failed = !outcome.exited || outcome.exit_code != 0;
    {
      std::lock_guard lock(mutex_);
      ++runs_;
      if (failed) ++failures_;
    }
    if (log_) {
      log_(failed ? "warn" : "info", "command hook " + hook_.program + " for alarm " + item.first +
                                         ": " + outcome.Describe(hook_.timeout_s));
    }
  }
}

}  // namespace spinward::daemon
