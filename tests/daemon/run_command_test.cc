// The real `spinward` binary as an operator runs it: `spinward run` as a child process fed by
// `spinward feed` over TCP and UDP, stopped by SIGTERM (exit 0, every interval written), reloaded
// by SIGHUP (a changed band is taken, a broken file is refused and the daemon serves on), refusing
// an invalid file at start with its file:line:column message; and `spinward replay` of a WAV
// written by Python's wave module, whose records must equal the batch estimator over the WAV's
// samples.
//
// Expected record counts (docs/configuration.md, docs/estimator.md): with segment L, hop H and
// segments per average S = round(interval_s * fs / H), N samples give K = floor((N - L) / H) + 1
// segments and floor(K / S) full intervals, plus one flushed record of K mod S segments at
// shutdown when K mod S > 0. tests/data/daemon/run_site.yaml: L = 1280, H = 640, fs = 25600,
// S = round(0.425 * 25600 / 640) = 17. `feed --seconds 3` sends N = 76800 samples: K = 119 = 7 x
// 17, so exactly 7 intervals and nothing left to flush.
#include <fcntl.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <gtest/gtest.h>

#include <fstream>
#include <regex>
#include <sstream>

#include "daemon/pipeline_reference.h"
#include "daemon/wait_until.h"
#include "support/test_paths.h"

extern char** environ;

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::SpinwardBinary;
using spinward::testing::TestDataDir;
using testing::Near;
using testing::WaitUntil;

std::string ReadText(const fs::path& path) {
  std::ifstream in(path);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

std::vector<std::string> Lines(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  for (std::string line; std::getline(in, line);)
    if (!line.empty()) lines.push_back(line);
  return lines;
}

std::size_t Count(const std::string& text, const std::string& what) {
  std::size_t count = 0;
  for (auto pos = text.find(what); pos != std::string::npos; pos = text.find(what, pos + 1))
    ++count;
  return count;
}

// The number after `"key":` in a JSON line (the layout is docs/records.md).
double NumberField(const std::string& line, const std::string& key, std::size_t from = 0) {
  const auto pos = line.find("\"" + key + "\":", from);
  EXPECT_NE(pos, std::string::npos) << key << " in " << line.substr(0, 200);
  return pos == std::string::npos ? NAN : std::strtod(line.c_str() + pos + key.size() + 3, nullptr);
}

std::int64_t IntegerField(const std::string& line, const std::string& key) {
  const auto pos = line.find("\"" + key + "\":");
  EXPECT_NE(pos, std::string::npos) << key;
  return pos == std::string::npos ? 0
                                  : std::strtoll(line.c_str() + pos + key.size() + 3, nullptr, 10);
}

// `spinward run` as a child process with its standard error in a file.
class Daemon {
 public:
  Daemon(const fs::path& dir, const fs::path& config, std::vector<std::string> extra = {})
      : log_(dir / "daemon.log"), ready_(dir / "ready.json"), records_(dir / "records.jsonl") {
    std::vector<std::string> args = {SpinwardBinary().string(),
                                     "run",
                                     "--config",
                                     config.string(),
                                     "--ready-file",
                                     ready_.string(),
                                     "--records",
                                     records_.string(),
                                     "--log-level",
                                     "debug",
                                     "--workers",
                                     "2"};
    args.insert(args.end(), extra.begin(), extra.end());
    std::vector<char*> argv;
    for (auto& a : args) argv.push_back(a.data());
    argv.push_back(nullptr);
    posix_spawn_file_actions_t actions;
    posix_spawn_file_actions_init(&actions);
    posix_spawn_file_actions_addopen(&actions, 1, log_.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
    posix_spawn_file_actions_adddup2(&actions, 1, 2);
    // Each daemon in its own folder: the site's relative storage path lands there, not in a
    // database shared by tests running side by side.
    posix_spawn_file_actions_addchdir_np(&actions, dir.c_str());
    EXPECT_EQ(posix_spawn(&pid_, argv[0], &actions, nullptr, argv.data(), environ), 0);
    posix_spawn_file_actions_destroy(&actions);
  }
  ~Daemon() {
    if (pid_ > 0 && !exited_) {
      ::kill(pid_, SIGKILL);
      ::waitpid(pid_, nullptr, 0);
    }
  }

  // Waits for the ready file and reads the bound ports from it.
  bool WaitReady() {
    if (!WaitUntil([&] { return fs::exists(ready_) || Exited(); })) return false;
    if (!fs::exists(ready_)) return false;
    const std::string ready = ReadText(ready_);
    std::smatch m;
    if (std::regex_search(ready, m, std::regex("\"transport\":\"tcp\",\"port\":([0-9]+)")))
      tcp_port_ = std::stoi(m[1]);
    if (std::regex_search(ready, m, std::regex("\"transport\":\"udp\",\"port\":([0-9]+)")))
      udp_port_ = std::stoi(m[1]);
    return tcp_port_ > 0 && udp_port_ > 0;
  }
  bool Exited() {
    if (exited_) return true;
    int status = 0;
    if (::waitpid(pid_, &status, WNOHANG) == pid_) {
      exited_ = true;
      exit_code_ = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    }
    return exited_;
  }
  // Exit code, or -1 if the daemon did not exit within the timeout.
  int WaitExit(std::chrono::seconds timeout = std::chrono::seconds(20)) {
    return WaitUntil([&] { return Exited(); }, timeout) ? exit_code_ : -1;
  }
  void Signal(int sig) { ::kill(pid_, sig); }
  std::string Log() const { return ReadText(log_); }
  bool WaitLog(const std::string& text, std::size_t times = 1) {
    return WaitUntil([&] { return Count(Log(), text) >= times; });
  }
  std::vector<std::string> Records() const { return Lines(ReadText(records_)); }
  int tcp_port() const { return tcp_port_; }
  int udp_port() const { return udp_port_; }

 private:
  fs::path log_, ready_, records_;
  pid_t pid_ = -1;
  bool exited_ = false;
  int exit_code_ = -1;
  int tcp_port_ = 0, udp_port_ = 0;
};

spinward::testing::CommandResult Feed(int port, const std::string& options) {
  return spinward::testing::RunCommand(
      SpinwardBinary().string() + " feed --to 127.0.0.1:" + std::to_string(port) + " " + options);
}

void ExpectSevenIntervals(const std::vector<std::string>& records) {
  ASSERT_EQ(records.size(), 7u);
  for (std::size_t r = 0; r < records.size(); ++r) {
    SCOPED_TRACE("record " + std::to_string(r));
    EXPECT_EQ(NumberField(records[r], "segments"), 17.0);
    // Interval length: the first runs L + 16 H = 11520 samples, each later one 17 H = 10880
    // samples after the previous end (0.45 s and 0.425 s at 25600 Hz).
    const std::int64_t ns =
        IntegerField(records[r], "end_ns") - IntegerField(records[r], "start_ns");
    EXPECT_NEAR(static_cast<double>(ns), r == 0 ? 450'000'000.0 : 425'000'000.0, 1.0);
    EXPECT_NE(records[r].find("\"point\":\"P101-DE-H\""), std::string::npos);
  }
}

TEST(RunCommand, FedOverTcpThenStoppedBySigtermWritesEveryInterval) {
  const fs::path dir = spinward::testing::FreshTempDir("run-tcp");
  Daemon daemon(dir, TestDataDir() / "daemon" / "run_site.yaml");
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  const auto fed = Feed(daemon.tcp_port(), "--seconds 3");
  ASSERT_EQ(fed.exit_code, 0) << fed.error_output;
  // All 119 segments are in once the 7th record is logged (debug level logs each record).
  ASSERT_TRUE(daemon.WaitLog("record P101-DE-H segments 17", 7)) << daemon.Log();
  daemon.Signal(SIGTERM);
  EXPECT_EQ(daemon.WaitExit(), 0) << daemon.Log();
  EXPECT_NE(daemon.Log().find("received SIGTERM"), std::string::npos);
  ExpectSevenIntervals(daemon.Records());
}

TEST(RunCommand, FedOverUdpThenStoppedBySigtermWritesEveryInterval) {
  const fs::path dir = spinward::testing::FreshTempDir("run-udp");
  Daemon daemon(dir, TestDataDir() / "daemon" / "run_site.yaml");
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  // Paced at the sample rate (3 s): UDP has no flow control, a burst could overflow the socket.
  const auto fed = Feed(daemon.udp_port(), "--seconds 3 --udp --realtime");
  ASSERT_EQ(fed.exit_code, 0) << fed.error_output;
  ASSERT_TRUE(daemon.WaitLog("record P101-DE-H segments 17", 7)) << daemon.Log();
  daemon.Signal(SIGTERM);
  EXPECT_EQ(daemon.WaitExit(), 0) << daemon.Log();
  ExpectSevenIntervals(daemon.Records());
}

TEST(RunCommand, SignalsMadeBeforeSendingGiveTheSameIntervals) {
  // `feed --distinct-signals` (load tests) makes its signals up front; the daemon must see the same
  // stream shape: 3 s in volts, 7 intervals of 17 segments (segment formula in the header).
  const fs::path dir = spinward::testing::FreshTempDir("run-distinct");
  Daemon daemon(dir, TestDataDir() / "daemon" / "run_site.yaml");
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  const auto fed = Feed(daemon.tcp_port(), "--seconds 3 --distinct-signals 1");
  ASSERT_EQ(fed.exit_code, 0) << fed.error_output;
  ASSERT_TRUE(daemon.WaitLog("record P101-DE-H segments 17", 7)) << daemon.Log();
  daemon.Signal(SIGTERM);
  EXPECT_EQ(daemon.WaitExit(), 0) << daemon.Log();
  ExpectSevenIntervals(daemon.Records());
  const auto with_file = Feed(daemon.tcp_port(), "--distinct-signals 2 --file x.wav");
  EXPECT_EQ(with_file.exit_code, 2);
  EXPECT_NE(with_file.error_output.find("does not go with --file"), std::string::npos)
      << with_file.error_output;
  const auto zero = Feed(daemon.tcp_port(), "--distinct-signals 0");
  EXPECT_EQ(zero.exit_code, 2);
  EXPECT_NE(zero.error_output.find("--distinct-signals"), std::string::npos) << zero.error_output;
}

TEST(RunCommand, SigtermFlushesThePartialInterval) {
  // 1 s: N = 25600, K = floor((25600 - 1280) / 640) + 1 = 39 = 2 x 17 + 5.
  const fs::path dir = spinward::testing::FreshTempDir("run-flush");
  Daemon daemon(dir, TestDataDir() / "daemon" / "run_site.yaml");
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  ASSERT_EQ(Feed(daemon.tcp_port(), "--seconds 1").exit_code, 0);
  ASSERT_TRUE(daemon.WaitLog("record P101-DE-H segments 17", 2)) << daemon.Log();
  daemon.Signal(SIGTERM);
  EXPECT_EQ(daemon.WaitExit(), 0) << daemon.Log();
  const auto records = daemon.Records();
  ASSERT_EQ(records.size(), 3u);
  // The flushed record holds at most the 5 segments left; fewer only if SIGTERM overtook the
  // last frames on their way, which the wait above makes unlikely but not impossible.
  EXPECT_GE(NumberField(records[2], "segments"), 1.0);
  EXPECT_LE(NumberField(records[2], "segments"), 5.0);
}

TEST(RunCommand, AFeedThatReconnectsIsStoredWholeWithoutADropout) {
  // tests/reliability/soak.py's pattern: a second `spinward feed` is a new TCP connection whose
  // frames count from 0 again (docs/protocol.md: a restarted sender) while its signal time runs on
  // from the first. Feed 1 (1 s): N = 25600, K = 39 = 2 x 17 + 5, so the reconnect ends an
  // interval of 5 segments; feed 2 (3 s): K = 119 = 7 x 17, nothing left for SIGTERM to flush.
  const fs::path dir = spinward::testing::FreshTempDir("run-reconnect");
  Daemon daemon(dir, TestDataDir() / "daemon" / "reconnect_site.yaml");
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  constexpr std::int64_t kStartNs = 1'796'104'800'000'000'000;  // 2026-12-01T06:00:00Z (date -u)
  constexpr std::int64_t kSecond = 1'000'000'000;
  ASSERT_EQ(Feed(daemon.tcp_port(), "--seconds 1 --start-ns " + std::to_string(kStartNs)).exit_code,
            0);
  ASSERT_EQ(Feed(daemon.tcp_port(), "--seconds 3 --start-ns " + std::to_string(kStartNs + kSecond))
                .exit_code,
            0);
  ASSERT_TRUE(daemon.WaitLog("record P101-DE-H segments 17", 9)) << daemon.Log();
  daemon.Signal(SIGTERM);
  EXPECT_EQ(daemon.WaitExit(), 0) << daemon.Log();

  // Every sample fed is in exactly one record, and the records tile the 4 s of signal time.
  const auto records = daemon.Records();
  ASSERT_EQ(records.size(), 10u) << daemon.Log();
  const std::vector<double> segments = {17, 17, 5, 17, 17, 17, 17, 17, 17, 17};
  std::int64_t previous_end = kStartNs;
  double samples = 0;
  for (std::size_t r = 0; r < records.size(); ++r) {
    SCOPED_TRACE("record " + std::to_string(r));
    EXPECT_EQ(NumberField(records[r], "segments"), segments[r]);
    EXPECT_EQ(IntegerField(records[r], "start_ns"), previous_end);
    previous_end = IntegerField(records[r], "end_ns");
    samples += NumberField(records[r], "samples");
  }
  EXPECT_EQ(IntegerField(records[2], "end_ns"), kStartNs + kSecond);  // ended at the reconnect
  EXPECT_EQ(previous_end, kStartNs + 4 * kSecond);
  EXPECT_EQ(samples, 4 * 25600.0);

  // The stored trend holds the 10 intervals, none flagged: no frame was lost, so no dropout
  // sensor fault (which would hold the machine's alarms off and keep the value out of roll-ups).
  EXPECT_EQ(daemon.Log().find("sensor_fault"), std::string::npos) << daemon.Log();
  const auto trend = spinward::testing::RunCommand(
      SpinwardBinary().string() + " trend --db " + (dir / "trends.sqlite").string() +
      " --point P101-DE-H --band velocity --since 2026-12-01T05:00Z --until 2026-12-01T07:00Z");
  ASSERT_EQ(trend.exit_code, 0) << trend.output;
  const auto rows = Lines(trend.output);
  ASSERT_EQ(rows.size(), 11u) << trend.output;  // header + 10 rows
  ASSERT_EQ(rows[0], "start_utc,end_utc,value,min,max,count,sensor_fault_count,unit");
  for (std::size_t r = 1; r < rows.size(); ++r) {
    // A raw row counts its one interval as a value (1) or as a sensor fault (0,1).
    EXPECT_NE(rows[r].find(",1,0,mm/s"), std::string::npos) << rows[r];
  }
}

TEST(RunCommand, SighupReloadsAChangedBandAndRefusesABrokenFile) {
  const fs::path dir = spinward::testing::FreshTempDir("run-reload");
  const fs::path config = dir / "site.yaml";
  fs::copy_file(TestDataDir() / "daemon" / "run_site.yaml", config);
  Daemon daemon(dir, config);
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();

  fs::copy_file(TestDataDir() / "daemon" / "run_site_band_changed.yaml", config,
                fs::copy_options::overwrite_existing);
  daemon.Signal(SIGHUP);
  ASSERT_TRUE(daemon.WaitLog("reloaded: 0 points kept, 1 restarted, 0 added, 0 removed"))
      << daemon.Log();

  fs::copy_file(TestDataDir() / "daemon" / "run_site_broken.yaml", config,
                fs::copy_options::overwrite_existing);
  daemon.Signal(SIGHUP);
  ASSERT_TRUE(daemon.WaitLog("reload refused")) << daemon.Log();
  // The problem is named where an editor shows it: line 25, column 45 is the 20000 (counted in
  // tests/data/daemon/run_site_broken.yaml, 1-based like editors).
  EXPECT_NE(daemon.Log().find(config.string() + ":25:45: points[0].bands[1].hi_hz:"),
            std::string::npos)
      << daemon.Log();
  EXPECT_FALSE(daemon.Exited());

  // Still serving, with the reloaded band (velocity up to 2000 Hz).
  ASSERT_EQ(Feed(daemon.tcp_port(), "--seconds 1").exit_code, 0);
  ASSERT_TRUE(daemon.WaitLog("record P101-DE-H segments 17", 2)) << daemon.Log();
  daemon.Signal(SIGTERM);
  EXPECT_EQ(daemon.WaitExit(), 0) << daemon.Log();
  const auto records = daemon.Records();
  ASSERT_GE(records.size(), 2u);
  EXPECT_NE(records[0].find("{\"name\":\"velocity\",\"lo_hz\":10,\"hi_hz\":2000,"),
            std::string::npos)
      << records[0];
}

TEST(RunCommand, AnInvalidConfigurationAtStartExitsOneNamingTheProblem) {
  const fs::path broken = TestDataDir() / "daemon" / "run_site_broken.yaml";
  const auto result =
      spinward::testing::RunCommand(SpinwardBinary().string() + " run --config " + broken.string());
  EXPECT_EQ(result.exit_code, 1);
  EXPECT_NE(result.error_output.find(broken.string() +
                                     ":25:45: points[0].bands[1].hi_hz: hi_hz 20000 is above"),
            std::string::npos)
      << result.error_output;
  EXPECT_NE(result.error_output.find("12800"), std::string::npos) << "Nyquist of 25600 Hz";
}

TEST(RunCommand, ReplayOfAWavGivesTheBatchEstimatorsRecords) {
  // N = 1280 + 640 * 40 + 300 samples: K = 41 segments, two intervals of 17 and 7 flushed.
  const fs::path dir = spinward::testing::FreshTempDir("replay");
  const std::size_t n = 1280 + 640 * 40 + 300;
  std::vector<double> values;
  {
    std::ofstream raw(dir / "pump.s16", std::ios::binary);
    for (double v : testing::TestSignal(n, 25600.0, 70, 0.15)) {
      const auto c = static_cast<std::int16_t>(std::lround(v * 32767.0));
      values.push_back(static_cast<double>(c) / 32768.0);  // 16-bit PCM full scale 2^15
      const auto u = static_cast<std::uint16_t>(c);
      raw.put(static_cast<char>(u & 0xFF)).put(static_cast<char>(u >> 8));
    }
  }
  const auto wrote = spinward::testing::RunCommand(
      spinward::testing::ReferencePython() + " " +
      (TestDataDir() / "daemon" / "write_wav.py").string() + " " + (dir / "pump.s16").string() +
      " " + (dir / "pump.wav").string() + " 25600");
  ASSERT_EQ(wrote.exit_code, 0) << wrote.error_output;
  const auto replay = spinward::testing::RunCommand(
      SpinwardBinary().string() + " replay " + (dir / "pump.wav").string() +
      " --point P101-DE-H --config " + (TestDataDir() / "daemon" / "run_site.yaml").string() +
      " --with-spectra --block 999 --records " + (dir / "out.jsonl").string());
  ASSERT_EQ(replay.exit_code, 0) << replay.error_output;
  const auto lines = Lines(ReadText(dir / "out.jsonl"));

  // The reference: the point's settings as the site file gives them (checked here by hand:
  // Hann, 1280/640, 17 segments), the recording's samples in g (replay applies no sensitivity).
  PointSettings settings;
  settings.point_id = "P101-DE-H";
  settings.sample_rate_hz = 25600.0;
  settings.welch.sample_rate_hz = 25600.0;
  settings.welch.segment_length = 1280;
  settings.welch.overlap = 640;
  settings.welch.segments_per_average = 17;
  settings.sample_unit = estimators::Unit::kG;
  settings.bands = {{"velocity", 10.0, 1000.0, estimators::Unit::kMillimetresPerSecond},
                    {"bearing", 1000.0, 10000.0, estimators::Unit::kG}};
  const auto expected = testing::ExpectedRecords({{values, 0}}, settings, /*flush=*/true);
  ASSERT_EQ(expected.size(), 3u);
  ASSERT_EQ(lines.size(), expected.size()) << replay.error_output;
  for (std::size_t r = 0; r < lines.size(); ++r) {
    SCOPED_TRACE("record " + std::to_string(r));
    const auto& line = lines[r];
    const auto& e = expected[r];
    EXPECT_EQ(NumberField(line, "segments"), static_cast<double>(e.segment_count));
    // The JSON carries 10 significant digits (docs/records.md): 1e-9 relative.
    EXPECT_TRUE(Near(NumberField(line, "rms"), e.indicators.rms, 1e-9));
    EXPECT_TRUE(Near(NumberField(line, "kurtosis"), e.indicators.kurtosis, 1e-9));
    EXPECT_EQ(NumberField(line, "samples"), static_cast<double>(e.indicators.count));
    const auto bands = line.find("\"bands\":[");
    ASSERT_NE(bands, std::string::npos);
    const auto second_band = line.find("\"name\":\"bearing\"", bands);
    EXPECT_TRUE(Near(NumberField(line, "rms", bands), e.band_rms[0], 1e-9));
    EXPECT_TRUE(Near(NumberField(line, "rms", second_band), e.band_rms[1], 1e-9));
    EXPECT_TRUE(Near(NumberField(line, "bin_width_hz"), 20.0, 1e-12));  // 25600 / 1280
    const auto values_at = line.find("\"values\":[");
    ASSERT_NE(values_at, std::string::npos);
    const char* p = line.c_str() + values_at + 10;
    std::size_t bins = 0, bad = 0;
    while (*p != ']' && bins < e.spectrum.values.size()) {
      char* end = nullptr;
      const double v = std::strtod(p, &end);
      if (!Near(v, e.spectrum.values[bins], 1e-9) && bad++ < 3)
        ADD_FAILURE() << "bin " << bins << ": " << Near(v, e.spectrum.values[bins], 1e-9).message();
      ++bins;
      p = *end == ',' ? end + 1 : end;
    }
    EXPECT_EQ(bins, e.spectrum.values.size());
    EXPECT_EQ(*p, ']');
    EXPECT_NEAR(static_cast<double>(IntegerField(line, "start_ns")), e.start_offset_ns, 1.0);
    EXPECT_NEAR(static_cast<double>(IntegerField(line, "end_ns")), e.end_offset_ns, 1.0);
  }
}

}  // namespace
}  // namespace spinward::daemon
