// The optional command hook: runs a configured program for an alarm, with the alarm's JSON on its
// standard input (for SMS or e-mail gateways). The program is started with posix_spawn, never
// through a shell, so nothing in an alarm text is ever interpreted; it is killed (SIGKILL) when it
// outlives its timeout. RunCommandHook runs one program and waits; CommandHookRunner runs them one
// after another on a thread of its own, so a slow gateway never holds up publishing or storage.
// Thread-safety: RunCommandHook is reentrant; CommandHookRunner::Enqueue from any thread.
#pragma once

#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <deque>
#include <functional>
#include <mutex>
#include <string>
#include <thread>

#include "spinward/config/site_config.h"

namespace spinward::daemon {

struct HookOutcome {
  bool started = false;
  std::string error;  // why it did not start (empty when started)
  bool timed_out = false;
  bool exited = false;  // ended by itself; exit_code valid
  int exit_code = -1;
  int signal = 0;  // the signal that ended it (SIGKILL after a timeout)
  // "exited with status 0", "killed after the 10 s timeout", "could not start: ..."
  std::string Describe(double timeout_s) const;
};

HookOutcome RunCommandHook(const config::CommandHookConfig& hook, const std::string& input);

class CommandHookRunner {
 public:
  using Log = std::function<void(const std::string& level, const std::string& message)>;
  static constexpr std::size_t kMaxQueued = 1000;  // beyond it new alarms skip the hook (logged)

  CommandHookRunner(config::CommandHookConfig hook, Log log);
  ~CommandHookRunner();  // runs what is queued, then joins
  CommandHookRunner(const CommandHookRunner&) = delete;
  CommandHookRunner& operator=(const CommandHookRunner&) = delete;

  void Enqueue(std::string event_id, std::string payload);
  std::uint64_t runs() const;
  std::uint64_t failures() const;  // did not start, non-zero exit, signal or timeout

 private:
  void Run();
  config::CommandHookConfig hook_;
  Log log_;
  mutable std::mutex mutex_;
  std::condition_variable wake_;
  std::deque<std::pair<std::string, std::string>> queue_;
  bool stop_ = false;
  std::uint64_t runs_ = 0;
  std::uint64_t failures_ = 0;
  std::thread thread_;
};

}  // namespace spinward::daemon
