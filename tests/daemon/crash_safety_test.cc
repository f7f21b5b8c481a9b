// Crash safety of trend storage with the real binary: `spinward run` fed by `spinward feed` over
// loopback TCP is killed with SIGKILL at a random moment, five times in a row, and restarted each
// time. After every kill the database must pass SQLite's `PRAGMA integrity_check` (which returns
// the single row "ok" for a sound file: SQLite documentation, "PRAGMA integrity_check"), read
// through Debian's Python sqlite3 module; the next start must open it (the daemon refuses a corrupt
// file before it is ready).
//
// The daemon does not log each committed interval (only a total at a clean shutdown), so instead of
// "every interval logged as committed is present" this checks that the trend row count never
// decreases across kills: a committed transaction is durable (SQLite WAL with synchronous=FULL,
// docs/storage.md), so no kill may take rows back.
// Alarm states: the site's velocity alarm has limits so low that the first interval latches a
// danger alarm (limits are this test's choice, no source); once stored, every restart must keep it
// danger and latched with exactly one normal -> danger event (a lost latch or a re-raised alarm
// would show as 0 or 2).
#include <fcntl.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <gtest/gtest.h>

#include <chrono>
#include <fstream>
#include <random>
#include <regex>
#include <sstream>
#include <thread>

#include "daemon/wait_until.h"
#include "support/test_paths.h"

extern char** environ;

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::SpinwardBinary;
using testing::WaitUntil;

std::string ReadText(const fs::path& path) {
  std::ifstream in(path);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

void WriteSite(const fs::path& path, const fs::path& db) {
  std::ofstream(path) << R"(site:
  name: Larkfield booster pump station (crash test)
machines:
  - {id: P-101, name: Booster pump 1, kind: pump, speed_rpm: 1480}
profiles:
  - {id: standard, segment: 1280, overlap: 50%, interval_s: 0.425}
points:
  - id: P101-DE-H
    machine: P-101
    location: drive-end bearing
    sensor: LK-P101-DE-H
    sensitivity: 100 mV/g
    sample_rate_hz: 25600
    profile: standard
    bands:
      - {name: velocity, lo_hz: 10, hi_hz: 1000, quantity: velocity, units: mm/s}
    alarms:
      - {measure: velocity, alert: 0.0001, danger: 0.0002, latching: true}
listeners:
  - {type: tcp, address: 127.0.0.1, port: 0}
storage:
  path: ")" << db.string()
                      << R"("
logging:
  level: info
)";
}

// `spinward run` as a child with its output in a log file; killed with SIGKILL if still running.
class Daemon {
 public:
  Daemon(const fs::path& dir, const fs::path& config, int round)
      : log_(dir / ("daemon-" + std::to_string(round) + ".log")),
        ready_(dir / ("ready-" + std::to_string(round) + ".json")) {
    std::vector<std::string> args = {SpinwardBinary().string(), "run",          "--config",
                                     config.string(),           "--ready-file", ready_.string()};
    std::vector<char*> argv;
    for (auto& a : args) argv.push_back(a.data());
    argv.push_back(nullptr);
    posix_spawn_file_actions_t actions;
    posix_spawn_file_actions_init(&actions);
    posix_spawn_file_actions_addopen(&actions, 1, log_.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
    posix_spawn_file_actions_adddup2(&actions, 1, 2);
    EXPECT_EQ(posix_spawn(&pid_, argv[0], &actions, nullptr, argv.data(), environ), 0);
    posix_spawn_file_actions_destroy(&actions);
  }
  ~Daemon() { Kill(); }
  bool WaitReady() {
    if (!WaitUntil([&] { return fs::exists(ready_) || Exited(); })) return false;
    std::smatch m;
    const std::string ready = ReadText(ready_);
    if (std::regex_search(ready, m, std::regex("\"transport\":\"tcp\",\"port\":([0-9]+)")))
      tcp_port_ = std::stoi(m[1]);
    return tcp_port_ > 0;
  }
  bool Exited() {
    if (exited_) return true;
    int status = 0;
    if (::waitpid(pid_, &status, WNOHANG) == pid_) exited_ = true;
    return exited_;
  }
  void Kill() {
    if (pid_ > 0 && !exited_) {
      ::kill(pid_, SIGKILL);
      ::waitpid(pid_, nullptr, 0);
      exited_ = true;
    }
  }
  std::string Log() const { return ReadText(log_); }
  int tcp_port() const { return tcp_port_; }

 private:
  fs::path log_, ready_;
  pid_t pid_ = -1;
  bool exited_ = false;
  int tcp_port_ = 0;
};

struct DbFacts {
  std::string integrity;  // "ok" when sound
  long trend_rows = -1;
  long danger_raises = -1;  // normal -> danger events of the velocity alarm
  std::string state;        // velocity alarm_state.state, "-" when none stored yet
  long latched = -1;        // alarm_state.latched, -1 when none stored yet
};

DbFacts ReadDb(const fs::path& dir, const fs::path& db) {
  const fs::path script = dir / "facts.py";
  std::ofstream(script) << R"(import sqlite3, sys
c = sqlite3.connect(sys.argv[1])
ok = c.execute("PRAGMA integrity_check").fetchall()
rows = c.execute("SELECT count(*) FROM trend_values").fetchone()[0]
raises = c.execute("SELECT count(*) FROM alarm_events WHERE measure='velocity' "
                   "AND from_state='normal' AND to_state='danger'").fetchone()[0]
st = c.execute("SELECT state, latched FROM alarm_state WHERE measure='velocity'").fetchone()
print(ok[0][0] if len(ok) == 1 else "; ".join(r[0] for r in ok), rows, raises,
      st[0] if st else "-", st[1] if st else -1)
)";
  const auto result = spinward::testing::RunCommand(spinward::testing::ReferencePython() + " " +
                                                    script.string() + " " + db.string());
  EXPECT_EQ(result.exit_code, 0) << result.output << result.error_output;
  DbFacts facts;
  std::istringstream in(result.output);
  in >> facts.integrity >> facts.trend_rows >> facts.danger_raises >> facts.state >> facts.latched;
  return facts;
}

TEST(CrashSafety, KilledFiveTimesWhileFedKeepsTheDatabaseSoundAndAlarmsLatched) {
  const fs::path dir = spinward::testing::FreshTempDir("crash-safety");
  const fs::path db = dir / "trends.sqlite";
  const fs::path config = dir / "site.yaml";
  WriteSite(config, db);

  const unsigned seed = std::random_device{}();
  SCOPED_TRACE("seed " + std::to_string(seed));
  std::mt19937 random(seed);
  // Kill between 0.3 s and 3 s after feeding starts: before, during and after commits (the writer
  // commits about 1 s after the first record, WriterOptions::max_batch_delay).
  std::uniform_int_distribution<int> kill_after_ms(300, 3000);

  long rows_before = 0;
  bool latch_seen = false;
  for (int round = 0; round < 5; ++round) {
    SCOPED_TRACE("round " + std::to_string(round));
    Daemon daemon(dir, config, round);
    ASSERT_TRUE(daemon.WaitReady()) << "the database did not reopen:\n" << daemon.Log();
    std::thread feeder([port = daemon.tcp_port()] {
      // Its exit code is of no interest: the daemon dies under it.
      spinward::testing::RunCommand(SpinwardBinary().string() + " feed --to 127.0.0.1:" +
                                    std::to_string(port) + " --seconds 4 2>/dev/null");
    });
    // The last round runs past the first commit for certain, so some rows are always stored.
    const int kill_ms = std::max(round == 4 ? 1500 : 0, kill_after_ms(random));
    std::this_thread::sleep_for(std::chrono::milliseconds(kill_ms));
    daemon.Kill();
    feeder.join();

    const DbFacts facts = ReadDb(dir, db);
    EXPECT_EQ(facts.integrity, "ok");
    EXPECT_GE(facts.trend_rows, rows_before) << "committed trend rows were lost";
    rows_before = std::max(rows_before, facts.trend_rows);
    if (facts.latched == 1) latch_seen = true;
    if (latch_seen) {
      EXPECT_EQ(facts.state, "danger") << daemon.Log();
      EXPECT_EQ(facts.latched, 1);
      EXPECT_EQ(facts.danger_raises, 1) << daemon.Log();
    }
  }
  // The rounds must have stored something, else the checks above proved nothing.
  EXPECT_GT(rows_before, 0);
  EXPECT_TRUE(latch_seen);

  // A last start opens the file cleanly; killed idle, the latch is still stored.
  Daemon last(dir, config, 99);
  ASSERT_TRUE(last.WaitReady()) << last.Log();
  last.Kill();
  const DbFacts final_facts = ReadDb(dir, db);
  EXPECT_EQ(final_facts.integrity, "ok");
  EXPECT_EQ(final_facts.state, "danger");
  EXPECT_EQ(final_facts.latched, 1);
  EXPECT_EQ(final_facts.danger_raises, 1);
}

}  // namespace
}  // namespace spinward::daemon
