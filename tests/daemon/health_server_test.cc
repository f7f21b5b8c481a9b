// The health endpoint over a real loopback socket, read by an outside client: Python's urllib
// fetches, prometheus_client's own parser (Debian's python3-prometheus-client) reads /metrics, and
// Python's json module reads /healthz and /api/points (tests/reference/metrics_parser.py). The
// server is fed by a fake HealthSource, so every expected figure is the fake's own.
#include <netinet/in.h>
#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <gtest/gtest.h>

#include <map>
#include <memory>
#include <mutex>
#include <sstream>
#include <string>

#include "spinward/daemon/health_server.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

class FakeHealthSource final : public HealthSource {
 public:
  HealthSnapshot Snapshot() const override {
    std::lock_guard lock(mutex_);
    return snapshot_;
  }
  template <typename Change>
  void Update(Change change) {
    std::lock_guard lock(mutex_);
    change(snapshot_);
  }

 private:
  mutable std::mutex mutex_;
  HealthSnapshot snapshot_;
};

// A running daemon at the Larkfield booster station, in figures.
HealthSnapshot LarkfieldSnapshot() {
  HealthSnapshot s;
  s.points = {{"P101-DE-H", "normal"}, {"P102-DE-H", "alert"}, {"F201-NDE-V", ""}};
  s.sources.frames = 12345;
  s.sources.bytes = 987654321;
  s.sources.bad_frames = 7;
  s.sources.bad_frames_by_reason = {{"bad_crc", 5}, {"bad_magic", 2}, {"too_long", 0}};
  s.sources.dropped_full = 3;
  s.router.segments = 40960;
  s.router.records = 4096;
  s.router.queued_samples = 2048;
  s.router.max_queued_seconds = 0.08;  // 2048 samples at 25.6 kHz
  s.storage_writable = true;
  s.storage_backlog_items = 17;
  s.storage_commits = 360;
  s.storage_commit_seconds = 4.5;
  s.listeners = {{"tcp 127.0.0.1:7400", true, 7400}, {"udp 127.0.0.1:7401", false, 7401}};
  return s;
}

using Lines = std::map<std::string, std::string>;

// Runs the outside client and returns its key=value lines; fails the test when it cannot parse.
Lines RunClient(const std::string& arguments) {
  auto result = testing::RunCommand(
      testing::ReferencePython() + " " +
      (testing::SourceDir() / "tests/reference/metrics_parser.py").string() + " " + arguments);
  EXPECT_EQ(result.exit_code, 0) << arguments << "\n" << result.error_output;
  Lines lines;
  std::istringstream in(result.output);
  std::string line;
  while (std::getline(in, line)) {
    auto eq = line.find('=', line.find('}') == std::string::npos ? 0 : line.find('}'));
    if (eq != std::string::npos) lines[line.substr(0, eq)] = line.substr(eq + 1);
  }
  return lines;
}

class HealthServerTest : public ::testing::Test {
 protected:
  void SetUp() override {
    source_ = std::make_shared<FakeHealthSource>();
    source_->Update([](HealthSnapshot& s) { s = LarkfieldSnapshot(); });
    server_ = std::make_unique<HealthServer>(HealthServerOptions{"127.0.0.1", 0}, source_);
    Status started = server_->Start();
    ASSERT_TRUE(started.ok()) << started.message();
    ASSERT_NE(server_->BoundPort(), 0);
  }
  std::string Url(const std::string& path) const {
    return "http://127.0.0.1:" + std::to_string(server_->BoundPort()) + path;
  }

  std::shared_ptr<FakeHealthSource> source_;
  std::unique_ptr<HealthServer> server_;
};

TEST_F(HealthServerTest, MetricsParseWithPrometheusClientAndEqualTheSource) {
  Lines m = RunClient("metrics " + Url("/metrics"));
  EXPECT_EQ(m["status"], "200");
  // Text exposition format 0.0.4 is announced in the Content-Type (Prometheus "Exposition
  // formats" page, from memory).
  EXPECT_EQ(m["content_type"].rfind("text/plain; version=0.0.4", 0), 0u) << m["content_type"];
  // prometheus_client names a counter family without its _total suffix; the samples keep it.
  EXPECT_EQ(m["family.spinward_frames_received"], "counter");
  EXPECT_EQ(m["family.spinward_bytes_received"], "counter");
  EXPECT_EQ(m["family.spinward_bad_frames"], "counter");
  EXPECT_EQ(m["family.spinward_dropped_frames"], "counter");
  EXPECT_EQ(m["family.spinward_segments"], "counter");
  EXPECT_EQ(m["family.spinward_records"], "counter");
  EXPECT_EQ(m["family.spinward_queue_depth_samples"], "gauge");
  EXPECT_EQ(m["family.spinward_storage_backlog_items"], "gauge");
  // Values: the fake's figures.
  EXPECT_EQ(m["sample.spinward_frames_received_total{}"], "12345");
  EXPECT_EQ(m["sample.spinward_bytes_received_total{}"], "987654321");
  EXPECT_EQ(m["sample.spinward_bad_frames_total{reason=\"bad_crc\"}"], "5");
  EXPECT_EQ(m["sample.spinward_bad_frames_total{reason=\"bad_magic\"}"], "2");
  EXPECT_EQ(m["sample.spinward_bad_frames_total{reason=\"too_long\"}"], "0");
  EXPECT_EQ(m.count("sample.spinward_bad_frames_total{reason=\"unspecified\"}"), 0u);
  EXPECT_EQ(m["sample.spinward_dropped_frames_total{}"], "3");
  EXPECT_EQ(m["sample.spinward_segments_total{}"], "40960");
  EXPECT_EQ(m["sample.spinward_records_total{}"], "4096");
  EXPECT_EQ(m["sample.spinward_queue_depth_samples{}"], "2048");
  EXPECT_EQ(m["sample.spinward_storage_backlog_items{}"], "17");
  // Processing lag and database write latency (a summary: prometheus_client reads _count, _sum).
  EXPECT_EQ(m["family.spinward_processing_lag_seconds"], "gauge");
  EXPECT_EQ(m["sample.spinward_processing_lag_seconds{}"], "0.08");
  EXPECT_EQ(m["family.spinward_storage_commit_seconds"], "summary");
  EXPECT_EQ(m["sample.spinward_storage_commit_seconds_count{}"], "360");
  EXPECT_EQ(m["sample.spinward_storage_commit_seconds_sum{}"], "4.5");
}

TEST_F(HealthServerTest, CountersMoveWhenTheSourceMoves) {
  Lines before = RunClient("metrics " + Url("/metrics"));
  source_->Update([](HealthSnapshot& s) {
    s.sources.frames += 100;
    s.sources.bytes += 51200;
    s.sources.bad_frames += 1;
    s.sources.bad_frames_by_reason[0].second += 1;
    s.router.records += 2;
    s.storage_backlog_items = 0;
  });
  Lines after = RunClient("metrics " + Url("/metrics"));
  EXPECT_EQ(before["sample.spinward_frames_received_total{}"], "12345");
  EXPECT_EQ(after["sample.spinward_frames_received_total{}"], "12445");
  EXPECT_EQ(after["sample.spinward_bytes_received_total{}"], "987705521");
  EXPECT_EQ(after["sample.spinward_bad_frames_total{reason=\"bad_crc\"}"], "6");
  EXPECT_EQ(after["sample.spinward_records_total{}"], "4098");
  EXPECT_EQ(after["sample.spinward_storage_backlog_items{}"], "0");
}

TEST_F(HealthServerTest, BadFramesWithoutReasonAndOddLabelValuesSurviveTheParser) {
  // A reason with a quote, a backslash and a line feed: the three characters the 0.0.4 format
  // escapes in label values (Prometheus exposition format, from memory). The parser must give
  // the original text back.
  source_->Update([](HealthSnapshot& s) {
    s.sources.bad_frames = 10;
    s.sources.bad_frames_by_reason = {{"odd \"q\" \\ end", 4}};
  });
  auto result = testing::RunCommand(
      testing::ReferencePython() +
      " -c 'import sys, urllib.request\n"
      "from prometheus_client.parser import text_string_to_metric_families as f\n"
      "body = urllib.request.urlopen(sys.argv[1], timeout=20).read().decode()\n"
      "for fam in f(body):\n"
      "  for s in fam.samples:\n"
      "    if s.name == \"spinward_bad_frames_total\": print(repr(s.labels[\"reason\"]), s.value)\n"
      "' " +
      Url("/metrics"));
  ASSERT_EQ(result.exit_code, 0) << result.error_output;
  // Python's repr of the original label text; the 6 not given a reason show as "unspecified".
  EXPECT_EQ(result.output, "'odd \"q\" \\\\ end' 4.0\n'unspecified' 6.0\n");
}

TEST_F(HealthServerTest, HealthzIsLiveAndReadyWithItsFigures) {
  Lines h = RunClient("json " + Url("/healthz"));
  EXPECT_EQ(h["status"], "200");
  EXPECT_EQ(h["content_type"], "application/json");
  EXPECT_EQ(h["live"], "true");
  EXPECT_EQ(h["ready"], "true");
  EXPECT_EQ(h["storage.writable"], "true");
  EXPECT_EQ(h["storage.backlog_items"], "17");
  EXPECT_EQ(h["listeners.length"], "2");
  EXPECT_EQ(h["listeners.0.description"], "\"tcp 127.0.0.1:7400\"");
  EXPECT_EQ(h["listeners.1.transport"], "\"udp\"");
  EXPECT_EQ(h["listeners.1.port"], "7401");
  EXPECT_EQ(h["points"], "3");
  EXPECT_EQ(h["frames_received"], "12345");
  EXPECT_EQ(h["records"], "4096");
}

TEST_F(HealthServerTest, NotReadyWithoutWritableStorageOrWithoutListeners) {
  source_->Update([](HealthSnapshot& s) { s.storage_writable = false; });
  Lines no_storage = RunClient("json " + Url("/healthz"));
  EXPECT_EQ(no_storage["live"], "true");
  EXPECT_EQ(no_storage["ready"], "false");
  EXPECT_EQ(no_storage["storage.writable"], "false");

  source_->Update([](HealthSnapshot& s) {
    s.storage_writable = true;
    s.listeners.clear();
  });
  Lines no_listeners = RunClient("json " + Url("/healthz"));
  EXPECT_EQ(no_listeners["ready"], "false");
  EXPECT_EQ(no_listeners["listeners.length"], "0");
}

TEST_F(HealthServerTest, PointsListIdsAndLatestStates) {
  Lines p = RunClient("json " + Url("/api/points"));
  EXPECT_EQ(p["status"], "200");
  EXPECT_EQ(p["length"], "3");
  EXPECT_EQ(p["0.id"], "\"P101-DE-H\"");
  EXPECT_EQ(p["0.state"], "\"normal\"");
  EXPECT_EQ(p["1.state"], "\"alert\"");
  EXPECT_EQ(p["2.id"], "\"F201-NDE-V\"");
  EXPECT_EQ(p["2.state"], "null");  // no state given
}

TEST_F(HealthServerTest, UnknownPathIs404AndOtherMethodsAre405) {
  // 404 Not Found and 405 Method Not Allowed with an Allow header: RFC 9110 sections 15.5.5 and
  // 15.5.6.
  EXPECT_EQ(RunClient("status GET " + Url("/nothing-here"))["status"], "404");
  EXPECT_EQ(RunClient("status GET " + Url("/"))["status"], "404");
  Lines post = RunClient("status POST " + Url("/metrics"));
  EXPECT_EQ(post["status"], "405");
  EXPECT_EQ(post["allow"], "GET");
  EXPECT_EQ(RunClient("status DELETE " + Url("/healthz"))["status"], "405");
  // The server keeps serving after refusing.
  EXPECT_EQ(RunClient("status GET " + Url("/healthz?verbose=1"))["status"], "200");
}

TEST_F(HealthServerTest, StopClosesAKeptAliveConnection) {
  // An HTTP/1.1 client keeps its connection open by default (RFC 9112 section 9.3); Stop must
  // close it rather than leave it open until the server object is destroyed.
  int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  ASSERT_GE(fd, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_port = htons(server_->BoundPort());
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  ASSERT_EQ(::connect(fd, reinterpret_cast<sockaddr*>(&address), sizeof(address)), 0);
  const std::string request = "GET /healthz HTTP/1.1\r\nHost: 127.0.0.1\r\n\r\n";
  ASSERT_EQ(::send(fd, request.data(), request.size(), 0), static_cast<ssize_t>(request.size()));
  std::string received;
  char chunk[4096];
  // Read until the JSON body's closing brace: the whole response is in.
  while (received.empty() || received.back() != '}') {
    pollfd p{fd, POLLIN, 0};
    ASSERT_EQ(::poll(&p, 1, 20000), 1) << "no response; got so far: " << received;
    ssize_t n = ::recv(fd, chunk, sizeof(chunk), 0);
    ASSERT_GT(n, 0) << received;
    received.append(chunk, static_cast<std::size_t>(n));
  }
  EXPECT_EQ(received.rfind("HTTP/1.1 200", 0), 0u) << received;
  server_->Stop();
  // The 20 s poll is only a guard against hanging; end of stream is expected at once.
  pollfd p{fd, POLLIN, 0};
  ASSERT_EQ(::poll(&p, 1, 20000), 1) << "connection still open after Stop";
  EXPECT_EQ(::recv(fd, chunk, sizeof(chunk), 0), 0);  // orderly end of stream
  ::close(fd);
}

TEST(HealthServer, BadAddressAndBusyPortAreClearErrors) {
  auto source = std::make_shared<FakeHealthSource>();
  HealthServer bad(HealthServerOptions{"localhost:80", 0}, source);
  Status bad_status = bad.Start();
  ASSERT_FALSE(bad_status.ok());
  EXPECT_NE(bad_status.message().find("localhost:80"), std::string::npos) << bad_status.message();

  HealthServer first(HealthServerOptions{"127.0.0.1", 0}, source);
  ASSERT_TRUE(first.Start().ok());
  HealthServer second(HealthServerOptions{"127.0.0.1", first.BoundPort()}, source);
  Status busy = second.Start();
  ASSERT_FALSE(busy.ok());
  EXPECT_NE(busy.message().find(std::to_string(first.BoundPort())), std::string::npos)
      << busy.message();
  // After Stop the port takes no connections (the kernel refuses them).
  first.Stop();
  auto probe = testing::RunCommand(
      testing::ReferencePython() +
      " -c 'import socket, sys\n"
      "try:\n  socket.create_connection((\"127.0.0.1\", int(sys.argv[1])), timeout=20)\n"
      "  print(\"connected\")\n"
      "except ConnectionRefusedError:\n  print(\"refused\")\n' " +
      std::to_string(first.BoundPort()));
  EXPECT_EQ(probe.output, "refused\n") << probe.error_output;
}

}  // namespace
}  // namespace spinward::daemon
