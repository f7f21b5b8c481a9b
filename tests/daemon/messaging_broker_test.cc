// Plant messaging end to end against a real broker: Debian's mosquitto, started by each test on a
// loopback port the system picked, with a generated configuration; `spinward run` (the real binary)
// fed by `spinward feed`; an independent subscriber in Python (Eclipse Paho,
// tests/reference/mqtt_subscriber.py) as the control room; the trend database read with Python's
// sqlite3 module; the health endpoint read with tests/reference/metrics_parser.py.
//
// Alarms: each point's velocity alarm has limits so low that the first interval raises danger
// (limits are this test's choice, no source), so a point fed for one interval gives exactly one
// normal -> danger transition. Delivery order is checked against the database's outbox order
// (docs/messaging.md: QoS 1, in outbox order, duplicates possible and dropped by event_id).
// RunHealth: the same daemon without messaging, for the health endpoint alone (docs/health.md).
#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <pwd.h>
#include <signal.h>
#include <spawn.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

#include <gtest/gtest.h>

#include <fstream>
#include <map>
#include <regex>
#include <set>
#include <sstream>

#include "daemon/wait_until.h"
#include "support/test_paths.h"

extern char** environ;

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::ReferencePython;
using spinward::testing::RunCommand;
using spinward::testing::SpinwardBinary;
using testing::WaitUntil;

constexpr auto kLongWait = std::chrono::seconds(60);

std::string ReadText(const fs::path& path) {
  std::ifstream in(path);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

std::size_t Count(const std::string& text, const std::string& what) {
  std::size_t count = 0;
  for (auto pos = text.find(what); pos != std::string::npos; pos = text.find(what, pos + 1))
    ++count;
  return count;
}

// A loopback port the system reports free (bound and released; common practice for test servers).
int FreePort() {
  int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  ::bind(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr);
  socklen_t len = sizeof addr;
  ::getsockname(fd, reinterpret_cast<sockaddr*>(&addr), &len);
  ::close(fd);
  return ntohs(addr.sin_port);
}

bool Accepting(int port) {
  int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  addr.sin_port = htons(static_cast<std::uint16_t>(port));
  const bool ok = ::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) == 0;
  ::close(fd);
  return ok;
}

// A child process with its output in a log file; SIGTERM on Stop, SIGKILL if still running at
// the end of the test.
class Child {
 public:
  Child(std::vector<std::string> args, const fs::path& log) : log_(log) {
    std::vector<char*> argv;
    for (auto& a : args) argv.push_back(a.data());
    argv.push_back(nullptr);
    posix_spawn_file_actions_t actions;
    posix_spawn_file_actions_init(&actions);
    posix_spawn_file_actions_addopen(&actions, 1, log_.c_str(), O_WRONLY | O_CREAT | O_APPEND,
                                     0644);
    posix_spawn_file_actions_adddup2(&actions, 1, 2);
    EXPECT_EQ(posix_spawn(&pid_, argv[0], &actions, nullptr, argv.data(), environ), 0);
    posix_spawn_file_actions_destroy(&actions);
  }
  ~Child() {
    if (!Exited()) {
      ::kill(pid_, SIGKILL);
      ::waitpid(pid_, nullptr, 0);
    }
  }
  bool Exited() {
    if (exited_ || pid_ <= 0) return true;
    int status = 0;
    if (::waitpid(pid_, &status, WNOHANG) == pid_) {
      exited_ = true;
      exit_code_ = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    }
    return exited_;
  }
  // SIGTERM and wait; the exit code, or -1 when it did not end in time.
  int Stop() {
    if (!Exited()) ::kill(pid_, SIGTERM);
    return WaitUntil([&] { return Exited(); }, kLongWait) ? exit_code_ : -1;
  }
  void Kill() {
    if (!Exited()) {
      ::kill(pid_, SIGKILL);
      ::waitpid(pid_, nullptr, 0);
      exited_ = true;
    }
  }
  std::string Log() const { return ReadText(log_); }

 private:
  fs::path log_;
  pid_t pid_ = -1;
  bool exited_ = false;
  int exit_code_ = -1;
};

// Debian's mosquitto with `config` (listener lines included) written to the test's folder.
std::unique_ptr<Child> StartBroker(const fs::path& dir, const std::string& config, int port) {
  const fs::path conf = dir / "mosquitto.conf";
  // Started as root, mosquitto switches to the user named here (mosquitto.conf(5), "user"): keep
  // the test's own user, who owns the key files and the persistence folder.
  const passwd* me = ::getpwuid(::getuid());
  std::ofstream(conf) << "user " << (me != nullptr ? me->pw_name : "root") << "\n" << config;
  auto broker = std::make_unique<Child>(
      std::vector<std::string>{"/usr/sbin/mosquitto", "-c", conf.string()}, dir / "broker.log");
  EXPECT_TRUE(WaitUntil([&] { return Accepting(port) || broker->Exited(); }, kLongWait));
  EXPECT_FALSE(broker->Exited()) << broker->Log();
  return broker;
}

// The Paho subscriber; its messages go to `out`, one per line (see mqtt_subscriber.py).
std::unique_ptr<Child> StartSubscriber(const fs::path& dir, const std::string& name, int port,
                                       const std::string& topic, bool clean,
                                       const std::vector<std::string>& login = {}) {
  const fs::path ready = dir / (name + ".ready");
  fs::remove(ready);
  std::vector<std::string> args = {
      ReferencePython(),
      std::string(SPINWARD_SOURCE_DIR) + "/tests/reference/mqtt_subscriber.py",
      "127.0.0.1",
      std::to_string(port),
      name,
      clean ? "1" : "0",
      topic,
      (dir / (name + ".messages")).string(),
      ready.string()};
  args.insert(args.end(), login.begin(), login.end());
  auto child = std::make_unique<Child>(args, dir / (name + ".log"));
  EXPECT_TRUE(WaitUntil([&] { return fs::exists(ready) || child->Exited(); }, kLongWait));
  EXPECT_TRUE(fs::exists(ready)) << child->Log();
  return child;
}

struct Message {
  std::string topic;
  bool retain = false;
  int qos = 0;
  std::string payload;
};

std::vector<Message> Messages(const fs::path& dir, const std::string& name) {
  std::vector<Message> messages;
  std::istringstream in(ReadText(dir / (name + ".messages")));
  for (std::string line; std::getline(in, line);) {
    std::istringstream fields(line);
    Message m;
    std::string retain, qos;
    if (!std::getline(fields, m.topic, '\t') || !std::getline(fields, retain, '\t') ||
        !std::getline(fields, qos, '\t') || !std::getline(fields, m.payload))
      continue;  // a line still being written
    m.retain = retain == "1";
    m.qos = std::stoi(qos);
    messages.push_back(m);
  }
  return messages;
}

std::vector<Message> WithSuffix(const std::vector<Message>& all, const std::string& suffix) {
  std::vector<Message> out;
  for (const auto& m : all)
    if (m.topic.ends_with(suffix)) out.push_back(m);
  return out;
}

std::string Field(const std::string& json, const std::string& key) {
  std::smatch m;
  if (std::regex_search(json, m, std::regex("\"" + key + "\":(\"[^\"]*\"|[^,}\\]]*)"))) return m[1];
  return "";
}

struct SiteOptions {
  int broker_port = 0;
  std::string protocol = "3.1.1";
  std::string username, password_file;
  std::string tls;  // the tls: mapping, flow style
  std::vector<std::string> sensors;
  bool band_values = false;
  bool messaging = true;
  std::string hook;  // the command_hook: mapping, flow style
};

void WriteSite(const fs::path& path, const fs::path& db, const SiteOptions& o) {
  std::ofstream out(path);
  out << "site:\n  name: Larkfield booster pump station\n"
         "machines:\n  - {id: P-101, name: Booster pump 1, kind: pump, speed_rpm: 1480}\n"
         "profiles:\n  - {id: standard, segment: 1280, overlap: 50%, interval_s: 0.425}\n"
         "points:\n";
  for (const auto& sensor : o.sensors) {
    out << "  - id: P101-" << sensor << "\n    machine: P-101\n    sensor: " << sensor
        << "\n    sensitivity: 100 mV/g\n    sample_rate_hz: 25600\n    profile: standard\n"
           "    bands:\n      - {name: velocity, lo_hz: 10, hi_hz: 1000, quantity: velocity, "
           "units: mm/s}\n    alarms:\n      - {measure: velocity, alert: 0.0001, danger: "
           "0.0002, latching: true}\n";
  }
  out << "listeners:\n  - {type: tcp, address: 127.0.0.1, port: 0}\n"
      << "storage:\n  path: \"" << db.string() << "\"\n"
      << "health: {port: 0}\n";
  if (!o.messaging) return;
  out << "messaging:\n  host: 127.0.0.1\n  port: " << o.broker_port << "\n  protocol: \""
      << o.protocol << "\"\n  topic_prefix: water\n  reconnect_min_s: 1\n  reconnect_max_s: 2\n";
  if (!o.username.empty()) out << "  username: " << o.username << "\n";
  if (!o.password_file.empty()) out << "  password_file: \"" << o.password_file << "\"\n";
  if (!o.tls.empty()) out << "  tls: " << o.tls << "\n";
  if (o.band_values) out << "  band_values: {every_intervals: 1, qos: 0}\n";
  if (!o.hook.empty()) out << "  command_hook: " << o.hook << "\n";
}

// `spinward run` with a ready file; the health port comes from it.
class Daemon {
 public:
  Daemon(const fs::path& dir, const fs::path& config, int round)
      : ready_(dir / ("ready-" + std::to_string(round) + ".json")),
        child_({SpinwardBinary().string(), "run", "--config", config.string(), "--ready-file",
                ready_.string(), "--workers", "2"},
               dir / ("daemon-" + std::to_string(round) + ".log")) {}
  bool WaitReady() {
    if (!WaitUntil([&] { return fs::exists(ready_) || child_.Exited(); }, kLongWait)) return false;
    std::smatch m;
    const std::string ready = ReadText(ready_);
    if (std::regex_search(ready, m, std::regex("\"transport\":\"tcp\",\"port\":([0-9]+)")))
      tcp_port_ = std::stoi(m[1]);
    if (std::regex_search(ready, m, std::regex("\"health_port\":([0-9]+)")))
      health_port_ = std::stoi(m[1]);
    return tcp_port_ > 0 && health_port_ > 0;
  }
  void Feed(const std::string& prefix, int sensors) {
    const auto result = RunCommand(
        SpinwardBinary().string() + " feed --to 127.0.0.1:" + std::to_string(tcp_port_) +
        " --sensors " + std::to_string(sensors) + " --sensor-prefix " + prefix + " --seconds 1");
    EXPECT_EQ(result.exit_code, 0) << result.error_output;
  }
  // key=value lines from metrics_parser.py ("metrics" or "json" mode).
  std::map<std::string, std::string> Health(const std::string& mode, const std::string& path) {
    const auto result = RunCommand(ReferencePython() + " " + std::string(SPINWARD_SOURCE_DIR) +
                                   "/tests/reference/metrics_parser.py " + mode +
                                   " http://127.0.0.1:" + std::to_string(health_port_) + path);
    EXPECT_EQ(result.exit_code, 0) << result.error_output;
    std::map<std::string, std::string> values;
    std::istringstream in(result.output);
    for (std::string line; std::getline(in, line);) {
      const auto eq = line.rfind('=');
      if (eq != std::string::npos) values[line.substr(0, eq)] = line.substr(eq + 1);
    }
    return values;
  }
  Child& child() { return child_; }

 private:
  fs::path ready_;
  Child child_;
  int tcp_port_ = 0, health_port_ = 0;
};

struct Outbox {
  std::vector<std::string> event_ids;  // outbox order
  long unsent = -1;
  long trend_rows = -1;
};

Outbox ReadOutbox(const fs::path& dir, const fs::path& db) {
  const fs::path script = dir / "outbox.py";
  std::ofstream(script) << R"(import sqlite3, sys
c = sqlite3.connect(sys.argv[1])
rows = c.execute("SELECT event_id, sent_ns FROM outbox ORDER BY outbox_pk").fetchall()
print(sum(1 for r in rows if r[1] is None), c.execute("SELECT count(*) FROM trend_values").fetchone()[0])
for r in rows: print(r[0])
)";
  const auto result = RunCommand(ReferencePython() + " " + script.string() + " " + db.string());
  Outbox outbox;
  if (result.exit_code != 0) return outbox;  // not created yet
  std::istringstream in(result.output);
  in >> outbox.unsent >> outbox.trend_rows;
  for (std::string id; in >> id;) outbox.event_ids.push_back(id);
  return outbox;
}

// Event ids of the alarm messages, first occurrence only (a consumer drops repeats by event_id).
std::vector<std::string> DistinctEventIds(const std::vector<Message>& alarms) {
  std::vector<std::string> ids;
  std::set<std::string> seen;
  for (const auto& m : alarms) {
    std::string id = Field(m.payload, "event_id");
    if (id.size() >= 2) id = id.substr(1, id.size() - 2);
    if (seen.insert(id).second) ids.push_back(id);
  }
  return ids;
}

void MakePasswordFile(const fs::path& file, const std::string& user, const std::string& password) {
  const auto result =
      RunCommand("/usr/bin/mosquitto_passwd -b -c " + file.string() + " " + user + " " + password);
  ASSERT_EQ(result.exit_code, 0) << result.error_output;
}

TEST(MessagingBroker, AlarmsStatesAndBandValuesReachASubscriberWithTheDocumentedPayloads) {
  const fs::path dir = spinward::testing::FreshTempDir("mqtt-live");
  const int port = FreePort();
  MakePasswordFile(dir / "passwords", "spinward", "larkfield-2026");
  std::ofstream(dir / "spinward.password") << "larkfield-2026\n";
  // mosquitto.conf(5): a listener with a password file refuses anonymous clients.
  auto broker = StartBroker(dir,
                            "listener " + std::to_string(port) +
                                " 127.0.0.1\nallow_anonymous false\npassword_file " +
                                (dir / "passwords").string() + "\n",
                            port);
  const std::vector<std::string> login = {"spinward", "larkfield-2026"};
  auto control_room = StartSubscriber(dir, "control-room", port, "water/#", true, login);

  SiteOptions o;
  o.broker_port = port;
  o.username = "spinward";
  o.password_file = (dir / "spinward.password").string();
  o.sensors = {"LK-0001", "LK-0002", "LK-0003"};
  o.band_values = true;
  WriteSite(dir / "site.yaml", dir / "trends.sqlite", o);
  Daemon daemon(dir, dir / "site.yaml", 0);
  ASSERT_TRUE(daemon.WaitReady()) << daemon.child().Log();
  ASSERT_TRUE(
      WaitUntil([&] { return Count(daemon.child().Log(), "connected to broker") > 0; }, kLongWait))
      << daemon.child().Log();

  // Health before any frame: ready (listener, storage, broker) and no frames counted.
  auto before = daemon.Health("metrics", "/metrics");
  EXPECT_EQ(before["sample.spinward_frames_received_total{}"], "0");
  EXPECT_EQ(before["sample.spinward_broker_connected{}"], "1");
  EXPECT_EQ(before["family.spinward_alarms_published"], "counter");

  daemon.Feed("LK-", 3);
  ASSERT_TRUE(WaitUntil(
      [&] { return WithSuffix(Messages(dir, "control-room"), "/alarm").size() >= 3; }, kLongWait))
      << daemon.child().Log();
  const auto all = Messages(dir, "control-room");
  const auto alarms = WithSuffix(all, "/alarm");
  std::set<std::string> points;
  for (const auto& m : alarms) {
    SCOPED_TRACE(m.topic + " " + m.payload);
    EXPECT_EQ(m.qos, 1);
    EXPECT_FALSE(m.retain);
    EXPECT_TRUE(std::regex_match(
        m.topic, std::regex("water/Larkfield-booster-pump-station/P-101/P101-LK-000[123]/alarm")));
    EXPECT_EQ(Field(m.payload, "schema"), "1");
    EXPECT_EQ(Field(m.payload, "from"), "\"normal\"");
    EXPECT_EQ(Field(m.payload, "to"), "\"danger\"");
    EXPECT_EQ(Field(m.payload, "measure"), "\"velocity\"");
    EXPECT_EQ(Field(m.payload, "unit"), "\"mm/s\"");
    EXPECT_EQ(Field(m.payload, "limit"), "0.0002");
    // ISO 8601 in UTC (RFC 3339 profile): date, 'T', time, optional fraction, 'Z'.
    EXPECT_TRUE(
        std::regex_match(Field(m.payload, "time"),
                         std::regex("\"\\d{4}-\\d\\d-\\d\\dT\\d\\d:\\d\\d:\\d\\d(\\.\\d+)?Z\"")));
    points.insert(Field(m.payload, "point"));
  }
  EXPECT_EQ(points.size(), 3u);

  // Band values: one message per interval per point, QoS 0 as configured, with units.
  const auto bands = WithSuffix(all, "/bands");
  ASSERT_FALSE(bands.empty());
  EXPECT_EQ(bands[0].qos, 0);
  EXPECT_NE(bands[0].payload.find("\"name\":\"velocity\""), std::string::npos);
  EXPECT_NE(bands[0].payload.find("\"unit\":\"mm/s\""), std::string::npos);
  EXPECT_EQ(Field(bands[0].payload, "schema"), "1");

  // Every outbox row acknowledged, in the order the database holds them.
  ASSERT_TRUE(
      WaitUntil([&] { return ReadOutbox(dir, dir / "trends.sqlite").unsent == 0; }, kLongWait));
  EXPECT_EQ(DistinctEventIds(alarms), ReadOutbox(dir, dir / "trends.sqlite").event_ids);

  // A subscriber arriving later sees the plant at once: retained states and the online status.
  ASSERT_TRUE(WaitUntil(
      [&] {
        auto s = WithSuffix(Messages(dir, "control-room"), "/state");
        return std::count_if(s.begin(), s.end(), [](const Message& m) {
                 return m.payload.find("\"state\":\"danger\"") != std::string::npos;
               }) >= 3;
      },
      kLongWait));
  auto late = StartSubscriber(dir, "late-viewer", port, "water/#", true, login);
  ASSERT_TRUE(WaitUntil(
      [&] { return WithSuffix(Messages(dir, "late-viewer"), "/state").size() >= 3; }, kLongWait));
  const auto seen_late = Messages(dir, "late-viewer");
  EXPECT_TRUE(WithSuffix(seen_late, "/alarm").empty());  // transitions are not retained
  for (const auto& m : WithSuffix(seen_late, "/state")) {
    SCOPED_TRACE(m.payload);
    EXPECT_TRUE(m.retain);
    EXPECT_EQ(Field(m.payload, "state"), "\"danger\"");
    EXPECT_EQ(Field(m.payload, "machine"), "\"P-101\"");
    EXPECT_NE(m.payload.find("\"latched\":true"), std::string::npos);
  }
  const auto status = WithSuffix(seen_late, "/status");
  ASSERT_EQ(status.size(), 1u);
  EXPECT_EQ(status[0].topic, "water/Larkfield-booster-pump-station/status");
  EXPECT_TRUE(status[0].retain);
  EXPECT_EQ(Field(status[0].payload, "status"), "\"online\"");

  // /metrics and /healthz moved with the frames (parsed by prometheus_client and json).
  auto after = daemon.Health("metrics", "/metrics");
  EXPECT_GT(std::stod(after["sample.spinward_frames_received_total{}"]), 0.0);
  EXPECT_GT(std::stod(after["sample.spinward_records_total{}"]), 0.0);
  // The alarms were committed, so the writer's commit time was counted; nothing waits now.
  EXPECT_GT(std::stod(after["sample.spinward_storage_commit_seconds_count{}"]), 0.0);
  EXPECT_GT(std::stod(after["sample.spinward_storage_commit_seconds_sum{}"]), 0.0);
  EXPECT_EQ(after["sample.spinward_processing_lag_seconds{}"], "0");
  EXPECT_EQ(after["sample.spinward_alarms_published_total{}"], "3");
  EXPECT_EQ(after["sample.spinward_outbox_pending{}"], "0");
  EXPECT_EQ(after["sample.spinward_points_by_state{state=\"danger\"}"], "3");
  auto health = daemon.Health("json", "/healthz");
  EXPECT_EQ(health["ready"], "true");
  EXPECT_EQ(health["broker.connected"], "true");
  auto api = daemon.Health("json", "/api/points");
  EXPECT_EQ(api["0.state"], "\"danger\"");

  // A clean stop publishes "offline" (retained) itself; the Last Will covers an unclean end.
  EXPECT_EQ(daemon.child().Stop(), 0) << daemon.child().Log();
  ASSERT_TRUE(WaitUntil(
      [&] {
        auto s = WithSuffix(Messages(dir, "control-room"), "/status");
        return !s.empty() && Field(s.back().payload, "status") == "\"offline\"";
      },
      kLongWait));
}

TEST(MessagingBroker, OutageAndRestartLoseNoAlarmAndKeepTheirOrder) {
  const fs::path dir = spinward::testing::FreshTempDir("mqtt-outage");
  const int port = FreePort();
  // A persistent session (clean session false, QoS 1): the broker keeps the control room's
  // messages while it is away and across its own restart (mosquitto.conf(5): persistence).
  const std::string broker_config = "listener " + std::to_string(port) +
                                    " 127.0.0.1\nallow_anonymous true\npersistence true\n"
                                    "persistence_location " +
                                    dir.string() + "/\n";
  {
    auto broker = StartBroker(dir, broker_config, port);
    auto scada = StartSubscriber(dir, "larkfield-scada", port, "water/+/+/+/alarm", false);
    scada->Stop();
    EXPECT_EQ(broker->Stop(), 0) << broker->Log();
  }
  ASSERT_FALSE(Accepting(port));

  SiteOptions o;
  o.broker_port = port;
  o.sensors = {"A-0001", "A-0002", "A-0003", "B-0001", "B-0002", "B-0003"};
  WriteSite(dir / "site.yaml", dir / "trends.sqlite", o);
  {
    // Broker down: alarms are stored, the daemon says so and keeps going.
    Daemon first(dir, dir / "site.yaml", 0);
    ASSERT_TRUE(first.WaitReady()) << first.child().Log();
    first.Feed("A-", 3);
    ASSERT_TRUE(WaitUntil(
        [&] { return ReadOutbox(dir, dir / "trends.sqlite").event_ids.size() == 3; }, kLongWait))
        << first.child().Log();
    EXPECT_NE(first.child().Log().find("cannot reach broker 127.0.0.1:" + std::to_string(port)),
              std::string::npos)
        << first.child().Log();
    auto health = first.Health("json", "/healthz");
    EXPECT_EQ(health["ready"], "false");  // no broker: not ready, still live
    EXPECT_EQ(health["live"], "true");
    EXPECT_EQ(first.child().Stop(), 0) << first.child().Log();
  }
  Daemon second(dir, dir / "site.yaml", 1);
  ASSERT_TRUE(second.WaitReady()) << second.child().Log();
  second.Feed("B-", 3);
  ASSERT_TRUE(WaitUntil(
      [&] { return ReadOutbox(dir, dir / "trends.sqlite").event_ids.size() == 6; }, kLongWait))
      << second.child().Log();
  EXPECT_EQ(ReadOutbox(dir, dir / "trends.sqlite").unsent, 6);

  // The broker comes back: the daemon reconnects on its own and empties the outbox.
  auto broker = StartBroker(dir, broker_config, port);
  ASSERT_TRUE(
      WaitUntil([&] { return ReadOutbox(dir, dir / "trends.sqlite").unsent == 0; }, kLongWait))
      << second.child().Log();
  auto scada = StartSubscriber(dir, "larkfield-scada", port, "water/+/+/+/alarm", false);
  const auto expected = ReadOutbox(dir, dir / "trends.sqlite").event_ids;
  ASSERT_TRUE(WaitUntil(
      [&] { return DistinctEventIds(Messages(dir, "larkfield-scada")).size() >= 6; }, kLongWait))
      << second.child().Log();
  EXPECT_EQ(DistinctEventIds(Messages(dir, "larkfield-scada")), expected);
  EXPECT_EQ(second.child().Stop(), 0);
}

TEST(MessagingBroker, TlsWithAClientCertificateAndTheLastWill) {
  const fs::path dir = spinward::testing::FreshTempDir("mqtt-tls");
  // A private CA, a server certificate for 127.0.0.1 (subjectAltName, RFC 6125) and a client
  // certificate, made with Debian's openssl.
  std::ofstream(dir / "san.ext") << "subjectAltName=IP:127.0.0.1\n";
  const std::string d = dir.string();
  const std::string script =
      "cd " + d +
      " && openssl req -x509 -newkey rsa:2048 -nodes -keyout ca.key -out ca.pem -days 2 "
      "-subj '/CN=Larkfield test CA' >/dev/null 2>&1"
      " && openssl req -newkey rsa:2048 -nodes -keyout server.key -out server.csr "
      "-subj '/CN=127.0.0.1' >/dev/null 2>&1"
      " && openssl x509 -req -in server.csr -CA ca.pem -CAkey ca.key -CAcreateserial "
      "-out server.pem -days 2 -extfile san.ext >/dev/null 2>&1"
      " && openssl req -newkey rsa:2048 -nodes -keyout client.key -out client.csr "
      "-subj '/CN=spinward-larkfield' >/dev/null 2>&1"
      " && openssl x509 -req -in client.csr -CA ca.pem -CAkey ca.key -CAcreateserial "
      "-out client.pem -days 2 >/dev/null 2>&1";
  ASSERT_EQ(RunCommand(script).exit_code, 0);
  const int plain = FreePort();
  int tls = FreePort();
  while (tls == plain) tls = FreePort();
  // mosquitto.conf(5): the second listener requires TLS and a client certificate from our CA; the
  // plain one is for the subscriber only.
  auto broker = StartBroker(
      dir,
      "allow_anonymous true\nlistener " + std::to_string(plain) + " 127.0.0.1\nlistener " +
          std::to_string(tls) + " 127.0.0.1\ncafile " + d + "/ca.pem\ncertfile " + d +
          "/server.pem\nkeyfile " + d + "/server.key\nrequire_certificate true\n",
      tls);
  auto control_room = StartSubscriber(dir, "control-room", plain, "water/#", true);
  SiteOptions o;
  o.broker_port = tls;
  o.protocol = "5";
  o.tls = "{ca_file: \"" + d + "/ca.pem\", cert_file: \"" + d + "/client.pem\", key_file: \"" + d +
          "/client.key\"}";
  o.sensors = {"LK-0001"};
  WriteSite(dir / "site.yaml", dir / "trends.sqlite", o);
  Daemon daemon(dir, dir / "site.yaml", 0);
  ASSERT_TRUE(daemon.WaitReady()) << daemon.child().Log();
  ASSERT_TRUE(WaitUntil(
      [&] {
        return daemon.child().Log().find("connected to broker 127.0.0.1:" + std::to_string(tls) +
                                         " (MQTT 5, TLS)") != std::string::npos;
      },
      kLongWait))
      << daemon.child().Log() << broker->Log();
  daemon.Feed("LK-", 1);
  ASSERT_TRUE(WaitUntil(
      [&] { return WithSuffix(Messages(dir, "control-room"), "/alarm").size() == 1; }, kLongWait))
      << daemon.child().Log();
  const auto status = WithSuffix(Messages(dir, "control-room"), "/status");
  ASSERT_FALSE(status.empty());
  EXPECT_EQ(Field(status[0].payload, "status"), "\"online\"");
  // Killed without a goodbye: the broker publishes the Last Will, "offline", retained (MQTT 3.1.1
  // section 3.1.2.5; MQTT 5 section 3.1.2.5).
  daemon.child().Kill();
  ASSERT_TRUE(WaitUntil(
      [&] {
        auto s = WithSuffix(Messages(dir, "control-room"), "/status");
        return s.size() >= 2 && Field(s.back().payload, "status") == "\"offline\"";
      },
      kLongWait));
  auto viewer = StartSubscriber(dir, "viewer", plain, "water/+/status", true);
  ASSERT_TRUE(WaitUntil([&] { return !Messages(dir, "viewer").empty(); }, kLongWait));
  EXPECT_TRUE(Messages(dir, "viewer")[0].retain);
  EXPECT_EQ(Field(Messages(dir, "viewer")[0].payload, "status"), "\"offline\"");
}

TEST(MessagingBroker, BadCredentialsAreNamedAndTheDaemonKeepsStoringAndRunningTheHook) {
  const fs::path dir = spinward::testing::FreshTempDir("mqtt-bad-login");
  const int port = FreePort();
  MakePasswordFile(dir / "passwords", "spinward", "larkfield-2026");
  std::ofstream(dir / "wrong.password") << "not-the-password\n";
  auto broker = StartBroker(dir,
                            "listener " + std::to_string(port) +
                                " 127.0.0.1\nallow_anonymous false\npassword_file " +
                                (dir / "passwords").string() + "\n",
                            port);
  SiteOptions o;
  o.broker_port = port;
  o.username = "spinward";
  o.password_file = (dir / "wrong.password").string();
  o.sensors = {"LK-0001", "LK-0002"};
  // The command hook does not need the broker: a shell script (run directly, not through a shell
  // by the daemon) appends each alarm it gets on standard input to a file.
  std::ofstream(dir / "hook.sh") << "cat >> \"$1\"\necho >> \"$1\"\n";
  o.hook = "{program: /bin/sh, args: [\"" + (dir / "hook.sh").string() + "\", \"" +
           (dir / "hooked.jsonl").string() + "\"], timeout_s: 20}";
  WriteSite(dir / "site.yaml", dir / "trends.sqlite", o);
  Daemon daemon(dir, dir / "site.yaml", 0);
  ASSERT_TRUE(daemon.WaitReady()) << daemon.child().Log();
  // MQTT 3.1.1 section 3.2.2.3: return code 5, "not authorized" (mosquitto's answer to a wrong
  // password).
  ASSERT_TRUE(WaitUntil(
      [&] { return daemon.child().Log().find("refused the connection") != std::string::npos; },
      kLongWait))
      << daemon.child().Log();
  const std::string log = daemon.child().Log();
  EXPECT_NE(log.find("broker 127.0.0.1:" + std::to_string(port) +
                     " refused the connection: Connection Refused: not authorised"),
            std::string::npos)
      << log;
  EXPECT_NE(log.find("check messaging.username and messaging.password_file for user 'spinward'"),
            std::string::npos)
      << log;
  daemon.Feed("LK-", 2);
  ASSERT_TRUE(WaitUntil(
      [&] { return ReadOutbox(dir, dir / "trends.sqlite").event_ids.size() == 2; }, kLongWait))
      << daemon.child().Log();
  const Outbox stored = ReadOutbox(dir, dir / "trends.sqlite");
  EXPECT_GT(stored.trend_rows, 0);
  EXPECT_EQ(stored.unsent, 2);
  ASSERT_TRUE(
      WaitUntil([&] { return Count(ReadText(dir / "hooked.jsonl"), "\n") == 2; }, kLongWait))
      << daemon.child().Log();
  for (const auto& id : stored.event_ids) {
    EXPECT_NE(ReadText(dir / "hooked.jsonl").find("\"event_id\":\"" + id + "\""),
              std::string::npos);
  }
  EXPECT_TRUE(WaitUntil([&] { return Count(daemon.child().Log(), "for alarm ") == 2; }, kLongWait));
  EXPECT_EQ(Count(daemon.child().Log(), ": exited with status 0"), 2u) << daemon.child().Log();
  auto health = daemon.Health("json", "/healthz");
  EXPECT_EQ(health["broker.connected"], "false");
  EXPECT_EQ(health["storage.writable"], "true");
  EXPECT_EQ(daemon.child().Stop(), 0) << daemon.child().Log();
}

// The health endpoint of `spinward run` without messaging: ready with no broker to wait for,
// counters that move as frames arrive, and point states read from the trend database.
TEST(RunHealth, WithoutMessagingTheEndpointReportsCountersAndStates) {
  const fs::path dir = spinward::testing::FreshTempDir("run-health");
  SiteOptions o;
  o.messaging = false;
  o.sensors = {"LK-0001", "LK-0002"};
  WriteSite(dir / "site.yaml", dir / "trends.sqlite", o);
  Daemon daemon(dir, dir / "site.yaml", 0);
  ASSERT_TRUE(daemon.WaitReady()) << daemon.child().Log();
  auto health = daemon.Health("json", "/healthz");
  EXPECT_EQ(health["ready"], "true");
  EXPECT_EQ(health["broker"], "null");
  EXPECT_EQ(health["storage.writable"], "true");
  auto before = daemon.Health("metrics", "/metrics");
  EXPECT_EQ(before["sample.spinward_frames_received_total{}"], "0");
  EXPECT_EQ(before["sample.spinward_storage_writable{}"], "1");
  EXPECT_EQ(before.count("family.spinward_broker_connected"), 0u);
  EXPECT_EQ(before["sample.spinward_points_by_state{state=\"unknown\"}"], "2");

  daemon.Feed("LK-", 2);
  // One second of signal per sensor at 25600 Hz in 2560-sample frames (feed's defaults): 10
  // frames each.
  ASSERT_TRUE(WaitUntil(
      [&] {
        return daemon.Health("metrics", "/metrics")["sample.spinward_frames_received_total{}"] ==
               "20";
      },
      kLongWait));
  ASSERT_TRUE(WaitUntil(
      [&] {
        auto points = daemon.Health("json", "/api/points");
        return points["0.state"] == "\"danger\"" && points["1.state"] == "\"danger\"";
      },
      kLongWait))
      << daemon.child().Log();
  auto after = daemon.Health("metrics", "/metrics");
  EXPECT_GT(std::stod(after["sample.spinward_bytes_received_total{}"]), 0.0);
  EXPECT_EQ(after["sample.spinward_points_by_state{state=\"danger\"}"], "2");
  EXPECT_EQ(daemon.child().Stop(), 0) << daemon.child().Log();
}

}  // namespace
}  // namespace spinward::daemon
