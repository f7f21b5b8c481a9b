// The daemon's network sources over real loopback sockets, with MonitoringService running in this
// process (site from YAML text, listeners on port 0): records equal the batch estimator over the
// samples as decoded, whatever the framing; malformed frames of every kind (the fixtures of
// tests/data/frames/MANIFEST, written by the independent Python reference) close a TCP connection
// or drop a UDP datagram, are counted by reason, and leave the daemon serving; unknown sensors,
// refused peers, connection limits, sequence gaps and wrong rates are counted; back-pressure loses
// nothing over TCP and counts drops over UDP.
#include <arpa/inet.h>
#include <netinet/in.h>
#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <gtest/gtest.h>

#include <fstream>
#include <map>
#include <mutex>
#include <sstream>
#include <thread>

#include "daemon/pipeline_reference.h"
#include "daemon/wait_until.h"
#include "spinward/config/site_loader.h"
#include "spinward/daemon/frame_codec.h"
#include "spinward/daemon/frame_sender.h"
#include "spinward/daemon/monitoring_service.h"
#include "spinward/daemon/site_settings.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

using testing::ExpectedRecords;
using testing::ExpectRecordsMatch;
using testing::Piece;
using testing::TestSignal;
using testing::WaitUntil;

constexpr std::int64_t kStartNs = 1'796'112'000'000'000'000;  // 2026-12-01T06:00:00Z

// Two points: P101 sends volts (100 mV/g) at 25600 Hz like the protocol's worked example; P102
// sends m/s^2 at 2560 Hz. Segments per average: round(interval_s * fs / hop) (docs/
// configuration.md) = round(0.2 * 25600 / 512) = 10 and round(0.5 * 2560 / 128) = 10.
std::string SiteYaml(const std::string& listeners, const std::string& narrow_interval = "0.5") {
  return R"(site:
  name: Larkfield booster pump station (loopback test)
machines:
  - {id: P-101, kind: pump, speed_rpm: 1480}
  - {id: P-102, kind: pump, speed_rpm: 1480}
profiles:
  - {id: wide, segment: 1024, overlap: 50%, interval_s: 0.2}
  - {id: narrow, segment: 256, overlap: 128, interval_s: )" +
         narrow_interval + R"(}
points:
  - id: P101-DE-H
    machine: P-101
    sensor: LK-P101-DE-H
    sensitivity: 100 mV/g
    sample_rate_hz: 25600
    profile: wide
    bands:
      - {name: velocity, lo_hz: 10, hi_hz: 1000, quantity: velocity, units: mm/s}
  - id: P102-DE-H
    machine: P-102
    sensor: LK-P102-DE-H
    units: m/s^2
    sample_rate_hz: 2560
    profile: narrow
    bands:
      - {name: velocity, lo_hz: 10, hi_hz: 1000}
      - {name: bearing, lo_hz: 300, hi_hz: 1280, quantity: acceleration, units: g}
listeners:
)" + listeners;
}

const std::string kBothListeners =
    "  - {type: tcp, address: 127.0.0.1, port: 0}\n  - {type: udp, address: 127.0.0.1, port: 0}\n";

// A running service with a collecting sink and a captured log.
struct Daemon {
  std::shared_ptr<CollectingSink> sink = std::make_shared<CollectingSink>();
  std::unique_ptr<MonitoringService> service;
  config::SiteConfig site;
  std::mutex log_mutex;
  std::vector<std::string> log;

  explicit Daemon(const std::string& yaml, std::shared_ptr<RecordSink> custom_sink = nullptr,
                  std::size_t max_queued = 1 << 20) {
    auto loaded = config::ParseSiteText(yaml, "loopback.yaml");
    for (const auto& p : loaded.problems) ADD_FAILURE() << p.ToString();
    site = loaded.site;
    ServiceOptions options;
    options.worker_threads = 2;
    options.max_queued_samples_per_point = max_queued;
    options.sink = custom_sink ? custom_sink : sink;
    options.log = [this](const std::string& level, const std::string& message) {
      std::lock_guard lock(log_mutex);
      log.push_back(level + ": " + message);
    };
    auto created = MonitoringService::Create(site, options);
    if (!created.ok()) {
      ADD_FAILURE() << created.message();
      return;
    }
    service = std::move(created).value();
    if (Status s = service->Start(); !s.ok()) ADD_FAILURE() << s.message();
  }
  // The service's threads may still log while it stops, so stop it before the log goes away.
  ~Daemon() { service.reset(); }
  Daemon(const Daemon&) = delete;
  Daemon& operator=(const Daemon&) = delete;

  std::uint16_t Port(bool tcp) const {
    for (const auto& l : service->Listeners())
      if (l.tcp == tcp) return l.port;
    ADD_FAILURE() << "no " << (tcp ? "tcp" : "udp") << " listener";
    return 0;
  }
  PointSettings Settings(const std::string& point) const {
    return PointSettingsFor(site, *site.FindPoint(point));
  }
  std::uint64_t BadFrames(const std::string& reason) const {
    for (const auto& [name, count] : service->Sources().bad_frames_by_reason)
      if (name == reason) return count;
    return 0;
  }
  // The log is written by the service's threads after they count what they log, so a test that
  // waited for a counter may still be ahead of the line: wait for it too.
  bool EventuallyLogs(const std::string& text) {
    return WaitUntil([&] {
      std::lock_guard lock(log_mutex);
      for (const auto& line : log)
        if (line.find(text) != std::string::npos) return true;
      return false;
    });
  }
};

// --- plain sockets, for bytes no well-behaved sender would write --------------------------------

int ConnectTcp(std::uint16_t port, const char* from = nullptr) {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  if (from != nullptr) {
    sockaddr_in local{};
    local.sin_family = AF_INET;
    ::inet_pton(AF_INET, from, &local.sin_addr);
    if (::bind(fd, reinterpret_cast<sockaddr*>(&local), sizeof local) != 0) ADD_FAILURE() << "bind";
  }
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_port = htons(port);
  ::inet_pton(AF_INET, "127.0.0.1", &addr.sin_addr);
  if (::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) != 0)
    ADD_FAILURE() << "connect to port " << port;
  return fd;
}

void SendAll(int fd, const std::vector<std::uint8_t>& bytes) {
  std::size_t sent = 0;
  while (sent < bytes.size()) {
    const ssize_t n = ::send(fd, bytes.data() + sent, bytes.size() - sent, MSG_NOSIGNAL);
    if (n <= 0) return;  // the daemon may already have closed: that is what some tests expect
    sent += static_cast<std::size_t>(n);
  }
}

// True when the peer closed the connection (end of stream or reset) within the timeout.
bool ClosedByPeer(int fd, int timeout_ms = 5000) {
  pollfd p{fd, POLLIN, 0};
  if (::poll(&p, 1, timeout_ms) <= 0) return false;
  char byte;
  return ::recv(fd, &byte, 1, MSG_DONTWAIT) <= 0;
}

void SendDatagram(std::uint16_t port, const std::vector<std::uint8_t>& bytes,
                  const char* from = nullptr) {
  const int fd = ::socket(AF_INET, SOCK_DGRAM, 0);
  if (from != nullptr) {
    sockaddr_in local{};
    local.sin_family = AF_INET;
    ::inet_pton(AF_INET, from, &local.sin_addr);
    if (::bind(fd, reinterpret_cast<sockaddr*>(&local), sizeof local) != 0) ADD_FAILURE() << "bind";
  }
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_port = htons(port);
  ::inet_pton(AF_INET, "127.0.0.1", &addr.sin_addr);
  EXPECT_EQ(
      ::sendto(fd, bytes.data(), bytes.size(), 0, reinterpret_cast<sockaddr*>(&addr), sizeof addr),
      static_cast<ssize_t>(bytes.size()));
  ::close(fd);
}

std::vector<std::uint8_t> Fixture(const std::string& name) {
  std::ifstream in(spinward::testing::TestDataDir() / "frames" / name, std::ios::binary);
  EXPECT_TRUE(in.good()) << name;
  return std::vector<std::uint8_t>(std::istreambuf_iterator<char>(in), {});
}

// (file, expected reason or "ok") from tests/data/frames/MANIFEST.
std::vector<std::pair<std::string, std::string>> Manifest() {
  std::ifstream in(spinward::testing::TestDataDir() / "frames" / "MANIFEST");
  std::vector<std::pair<std::string, std::string>> entries;
  std::string line;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#') continue;
    std::istringstream fields(line);
    std::string file, reason;
    fields >> file >> reason;
    entries.emplace_back(file, reason);
  }
  return entries;
}

// --- records over the network equal the batch estimator ----------------------------------------

// Cuts `x` into frames of `frame_samples`, decodes each one back (the samples as the daemon will
// see them) and returns the frames and the decoded stream divided by `volts_per_unit`.
std::vector<std::vector<std::uint8_t>> MakeFrames(SensorStream& stream,
                                                  const std::vector<double>& x,
                                                  std::size_t frame_samples, double volts_per_unit,
                                                  std::vector<double>* decoded) {
  std::vector<std::vector<std::uint8_t>> frames;
  for (std::size_t pos = 0; pos < x.size(); pos += frame_samples) {
    const std::size_t n = std::min(frame_samples, x.size() - pos);
    auto frame = stream.NextFrame(std::span<const double>(x.data() + pos, n));
    EXPECT_TRUE(frame.ok()) << frame.message();
    auto back = DecodeFrame(*frame);
    EXPECT_TRUE(back.ok());
    for (double v : back.value().samples) decoded->push_back(v / volts_per_unit);
    frames.push_back(std::move(*frame));
  }
  return frames;
}

void SendFrames(Daemon& daemon, FrameSender::Transport transport,
                const std::vector<std::vector<std::uint8_t>>& frames) {
  const bool tcp = transport == FrameSender::Transport::kTcp;
  auto sender = FrameSender::Connect(transport, "127.0.0.1", daemon.Port(tcp));
  ASSERT_TRUE(sender.ok()) << sender.message();
  std::size_t in_flight_bytes = 0, sent = 0;
  for (const auto& frame : frames) {
    ASSERT_TRUE((*sender)->Send(frame).ok());
    ++sent;
    in_flight_bytes += frame.size();
    // UDP has no flow control: keep at most ~48 KB unread so the socket buffer never overflows.
    if (!tcp && in_flight_bytes > 48 * 1024) {
      ASSERT_TRUE(WaitUntil([&] { return daemon.service->Sources().frames >= sent; }))
          << "datagrams lost on loopback";
      in_flight_bytes = 0;
    }
  }
  (*sender)->Close();
}

TEST(NetworkListener, RecordsEqualTheBatchEstimatorWhateverTheFraming) {
  // 256 + 128 * 33 + 50 samples: 34 segments, three averages of 10 and 4 segments flushed at Stop.
  const std::size_t n = 256 + 128 * 33 + 50;
  const auto x = TestSignal(n, 2560.0, 50, 3.0);
  for (auto transport : {FrameSender::Transport::kTcp, FrameSender::Transport::kUdp}) {
    for (std::size_t frame_samples : {1u, 7u, 256u, 1000u, 8192u}) {
      const bool tcp = transport == FrameSender::Transport::kTcp;
      SCOPED_TRACE(std::string(tcp ? "tcp" : "udp") + ", frames of " +
                   std::to_string(frame_samples));
      Daemon daemon(SiteYaml(kBothListeners));
      ASSERT_TRUE(daemon.service);
      const auto settings = daemon.Settings("P102-DE-H");
      ASSERT_EQ(settings.welch.segments_per_average, 10u);
      SensorStream stream("LK-P102-DE-H", 2560.0, kStartNs, SampleFormat::kFloat32, 10.0,
                          ScaleUnit::kEngineering);
      std::vector<double> decoded;  // float32-rounded: what the wire carries
      const auto frames = MakeFrames(stream, x, frame_samples, 1.0, &decoded);
      SendFrames(daemon, transport, frames);
      ASSERT_TRUE(WaitUntil([&] { return daemon.service->PointTotals().samples == n; }))
          << daemon.service->PointTotals().samples << " of " << n << " samples processed";
      daemon.service->Stop();  // flushes the interval in progress
      ExpectRecordsMatch(daemon.sink->Records(),
                         ExpectedRecords({{decoded, kStartNs}}, settings, /*flush=*/true));
      EXPECT_EQ(daemon.service->PointTotals().sequence_gaps, 0u);
      EXPECT_EQ(daemon.service->Sources().frames, frames.size());
    }
  }
}

TEST(NetworkListener, Int16VoltsAreScaledAndDividedBySensitivity) {
  // 16-bit counts of a +-10 V converter (scale 10 / 32767 V per count, as SensorStream writes) from
  // a 100 mV/g sensor: records in g equal the batch estimator over counts * scale / 0.1.
  const std::size_t n = 1024 + 512 * 25;  // 26 segments: two averages of 10, 6 flushed
  const auto g = TestSignal(n, 25600.0, 51, 2.0);
  std::vector<double> volts(n);
  for (std::size_t i = 0; i < n; ++i) volts[i] = 0.1 * g[i];
  Daemon daemon(SiteYaml(kBothListeners));
  ASSERT_TRUE(daemon.service);
  SensorStream stream("LK-P101-DE-H", 25600.0, kStartNs, SampleFormat::kInt16);
  std::vector<double> decoded;
  const auto frames = MakeFrames(stream, volts, 1000, 0.1, &decoded);
  SendFrames(daemon, FrameSender::Transport::kTcp, frames);
  ASSERT_TRUE(WaitUntil([&] { return daemon.service->PointTotals().samples == n; }));
  daemon.service->Stop();
  const auto records = daemon.sink->Records();
  ExpectRecordsMatch(records,
                     ExpectedRecords({{decoded, kStartNs}}, daemon.Settings("P101-DE-H"), true));
  ASSERT_FALSE(records.empty());
  EXPECT_EQ(records[0].sample_unit, "g");
}

// --- malformed frames ----------------------------------------------------------------------------

TEST(NetworkListener, EveryMalformedFrameClosesTcpCountedByReasonAndTheDaemonServesOn) {
  Daemon daemon(SiteYaml(kBothListeners));
  ASSERT_TRUE(daemon.service);
  const auto good = Fixture("doc_example_int16.bin");  // LK-P101-DE-H, 25600 Hz, volts
  std::size_t malformed = 0;
  for (const auto& [file, manifest_reason] : Manifest()) {
    if (manifest_reason == "ok") continue;
    ++malformed;
    SCOPED_TRACE(file + " (" + manifest_reason + ")");
    const auto bytes = Fixture(file);
    // On a stream, a frame cut short is only known to be truncated when the connection ends, and
    // bytes after a frame are the start of the next one: they too end the stream mid-frame.
    std::string reason = manifest_reason;
    const bool ends_mid_frame =
        file == "truncated.bin" || file == "truncated_prefix.bin" || file == "trailing_bytes.bin";
    if (file == "trailing_bytes.bin") reason = "truncated";
    const std::uint64_t before = daemon.BadFrames(reason);
    const std::uint64_t blocks_before = daemon.service->PointTotals().blocks;

    const int fd = ConnectTcp(daemon.Port(true));
    SendAll(fd, bytes);
    if (ends_mid_frame) ::shutdown(fd, SHUT_WR);
    EXPECT_TRUE(ClosedByPeer(fd)) << "the daemon kept the connection open";
    ::close(fd);
    EXPECT_TRUE(WaitUntil([&] { return daemon.BadFrames(reason) == before + 1; }))
        << "count for " << reason << " is " << daemon.BadFrames(reason);
    // trailing_bytes.bin starts with a whole good frame: it is delivered before the stream ends.
    const std::uint64_t good_in_fixture = file == "trailing_bytes.bin" ? 1 : 0;

    // Still serving: a good frame on a new connection is processed.
    const int again = ConnectTcp(daemon.Port(true));
    SendAll(again, good);
    EXPECT_TRUE(WaitUntil([&] {
      return daemon.service->PointTotals().blocks == blocks_before + good_in_fixture + 1;
    }));
    ::close(again);
  }
  EXPECT_EQ(malformed, 24u) << "MANIFEST changed: check the expected reasons above";
  EXPECT_TRUE(daemon.EventuallyLogs("bad frame from 127.0.0.1"));
}

TEST(NetworkListener, EveryMalformedDatagramIsDroppedCountedByReasonAndTheDaemonServesOn) {
  Daemon daemon(SiteYaml(kBothListeners));
  ASSERT_TRUE(daemon.service);
  const auto good = Fixture("doc_example_int16.bin");
  for (const auto& [file, reason] : Manifest()) {
    if (reason == "ok") continue;
    SCOPED_TRACE(file + " (" + reason + ")");
    const std::uint64_t before = daemon.BadFrames(reason);
    const std::uint64_t blocks_before = daemon.service->PointTotals().blocks;
    SendDatagram(daemon.Port(false), Fixture(file));
    EXPECT_TRUE(WaitUntil([&] { return daemon.BadFrames(reason) == before + 1; }))
        << "count for " << reason << " is " << daemon.BadFrames(reason);
    SendDatagram(daemon.Port(false), good);
    EXPECT_TRUE(
        WaitUntil([&] { return daemon.service->PointTotals().blocks == blocks_before + 1; }));
  }
  EXPECT_EQ(daemon.service->Sources().frames, 24u);  // only the good datagrams decoded
  EXPECT_EQ(daemon.service->Sources().bad_frames, 24u);
}

TEST(NetworkListener, GoodFramesBeforeABadOneInTheSameWriteAreStillDelivered) {
  Daemon daemon(SiteYaml(kBothListeners));
  ASSERT_TRUE(daemon.service);
  auto bytes = Fixture("doc_example_int16.bin");
  const auto bad = Fixture("bad_crc.bin");
  bytes.insert(bytes.end(), bad.begin(), bad.end());
  const int fd = ConnectTcp(daemon.Port(true));
  SendAll(fd, bytes);
  EXPECT_TRUE(ClosedByPeer(fd));
  ::close(fd);
  EXPECT_TRUE(WaitUntil([&] { return daemon.BadFrames("bad_crc") == 1; }));
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->PointTotals().samples == 8; }));
}

TEST(NetworkListener, UnknownSensorIsCountedAndTheConnectionStaysOpen) {
  Daemon daemon(SiteYaml(kBothListeners));
  ASSERT_TRUE(daemon.service);
  const int fd = ConnectTcp(daemon.Port(true));
  SendAll(fd, Fixture("good_float32.bin"));  // sensor LK-P102-DE-V: not on this site
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->Sources().unknown_sensor == 1; }));
  EXPECT_EQ(daemon.service->PointTotals().unknown_sensor, 1u);
  SendAll(fd, Fixture("doc_example_int16.bin"));  // same connection: still read
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->PointTotals().blocks == 1; }));
  EXPECT_FALSE(ClosedByPeer(fd, 50));
  ::close(fd);
  SendDatagram(daemon.Port(false), Fixture("good_utf8_sensor_id.bin"));
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->Sources().unknown_sensor == 2; }));
  EXPECT_TRUE(daemon.EventuallyLogs("unknown sensor 'LK-P102-DE-V'"));
}

TEST(NetworkListener, PeersOutsideTheAllowListAreRefused) {
  // Loopback is all of 127.0.0.0/8 on Linux: 127.0.0.2 is a second local peer.
  Daemon daemon(
      SiteYaml("  - {type: tcp, port: 0, allowed_peers: [127.0.0.2]}\n"
               "  - {type: udp, port: 0, allowed_peers: [127.0.0.2]}\n"));
  ASSERT_TRUE(daemon.service);
  const auto good = Fixture("doc_example_int16.bin");

  const int refused = ConnectTcp(daemon.Port(true), "127.0.0.1");
  EXPECT_TRUE(ClosedByPeer(refused));
  ::close(refused);
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->Sources().refused_peer == 1; }));
  SendDatagram(daemon.Port(false), good, "127.0.0.1");
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->Sources().refused_peer == 2; }));
  EXPECT_EQ(daemon.service->PointTotals().blocks, 0u);

  const int allowed = ConnectTcp(daemon.Port(true), "127.0.0.2");
  SendAll(allowed, good);
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->PointTotals().blocks == 1; }));
  ::close(allowed);
  SendDatagram(daemon.Port(false), good, "127.0.0.2");
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->PointTotals().blocks == 2; }));
  EXPECT_EQ(daemon.service->Sources().refused_peer, 2u);
}

TEST(NetworkListener, ConnectionsOverTheLimitAreRefused) {
  Daemon daemon(SiteYaml("  - {type: tcp, port: 0, max_connections: 2}\n"));
  ASSERT_TRUE(daemon.service);
  const int first = ConnectTcp(daemon.Port(true));
  const int second = ConnectTcp(daemon.Port(true));
  ASSERT_TRUE(WaitUntil([&] { return daemon.service->Sources().connections == 2; }));
  const int third = ConnectTcp(daemon.Port(true));
  EXPECT_TRUE(ClosedByPeer(third));
  ::close(third);
  EXPECT_TRUE(WaitUntil([&] { return daemon.service->Sources().refused_connections == 1; }));
  EXPECT_FALSE(ClosedByPeer(first, 50));
  // Once one leaves, a newcomer gets its place (retried: the daemon notices the leave by reading
  // the end of that stream, a moment later).
  ::close(first);
  bool admitted = false;
  for (int attempt = 0; attempt < 100 && !admitted; ++attempt) {
    const auto before = daemon.service->Sources();
    const int fourth = ConnectTcp(daemon.Port(true));
    EXPECT_TRUE(WaitUntil([&] {
      const auto now = daemon.service->Sources();
      return now.connections > before.connections ||
             now.refused_connections > before.refused_connections;
    }));
    admitted = daemon.service->Sources().connections == 3;
    ::close(fourth);
  }
  EXPECT_TRUE(admitted);
  ::close(second);
  EXPECT_TRUE(daemon.EventuallyLogs("max_connections 2 reached"));
}

TEST(NetworkListener, SequenceGapsAndWrongRatesAreCountedPerPoint) {
  Daemon daemon(SiteYaml(kBothListeners));
  ASSERT_TRUE(daemon.service);
  auto sender = FrameSender::Connect(FrameSender::Transport::kTcp, "127.0.0.1", daemon.Port(true));
  ASSERT_TRUE(sender.ok());
  SensorStream stream("LK-P101-DE-H", 25600.0, kStartNs, SampleFormat::kInt16);
  const std::vector<double> samples(500, 0.05);
  for (int i = 0; i < 3; ++i) ASSERT_TRUE((*sender)->Send(*stream.NextFrame(samples)).ok());
  stream.Skip(500, 1);  // one frame lost on the way
  for (int i = 0; i < 2; ++i) ASSERT_TRUE((*sender)->Send(*stream.NextFrame(samples)).ok());
  SensorStream other_rate("LK-P101-DE-H", 12800.0, kStartNs, SampleFormat::kInt16);
  ASSERT_TRUE((*sender)->Send(*other_rate.NextFrame(samples)).ok());
  (*sender)->Close();
  ASSERT_TRUE(WaitUntil([&] {
    const auto t = daemon.service->PointTotals();
    return t.blocks + t.rejected_rate == 6;
  }));
  const auto totals = daemon.service->PointTotals();
  EXPECT_EQ(totals.sequence_gaps, 1u);
  EXPECT_EQ(totals.rejected_rate, 1u);
  EXPECT_EQ(totals.samples, 2500u);
  EXPECT_TRUE(daemon.EventuallyLogs("sequence gap: expected 3, got 4"));
  EXPECT_TRUE(daemon.EventuallyLogs("12800"));
}

// --- back-pressure -------------------------------------------------------------------------------

// A sink that takes its time, so the point falls behind the network.
class SlowSink final : public RecordSink {
 public:
  void Consume(const storage::MeasurementRecord&) override {
    std::this_thread::sleep_for(std::chrono::milliseconds(1));
    ++records_;
  }
  std::atomic<int> records_{0};
};

TEST(NetworkListener, TcpBackPressureLosesNothing) {
  // One segment per average (round(0.05 * 2560 / 128) = 1): a record, and a slow sink call, every
  // 128 samples; a queue of 256 samples per point; 64-sample frames sent as fast as possible.
  auto slow = std::make_shared<SlowSink>();
  Daemon daemon(SiteYaml(kBothListeners, "0.05"), slow, 256);
  ASSERT_TRUE(daemon.service);
  const std::size_t n = 128 * 400;
  SensorStream stream("LK-P102-DE-H", 2560.0, kStartNs, SampleFormat::kFloat32, 10.0,
                      ScaleUnit::kEngineering);
  std::vector<double> decoded;
  const auto frames = MakeFrames(stream, TestSignal(n, 2560.0, 52), 64, 1.0, &decoded);
  SendFrames(daemon, FrameSender::Transport::kTcp, frames);
  ASSERT_TRUE(WaitUntil([&] { return daemon.service->PointTotals().samples == n; }))
      << daemon.service->PointTotals().samples << " of " << n;
  const auto totals = daemon.service->PointTotals();
  EXPECT_EQ(totals.sequence_gaps, 0u);
  // Segments: floor((51200 - 256) / 128) + 1 = 399, one record each.
  EXPECT_EQ(totals.segments, 399u);
  EXPECT_TRUE(WaitUntil([&] { return slow->records_ == 399; }));
  EXPECT_GT(daemon.service->Sources().paused_full, 0u) << "the point never fell behind";
  EXPECT_EQ(daemon.service->Sources().dropped_full, 0u);
}

TEST(NetworkListener, UdpBackPressureDropsAndCounts) {
  auto slow = std::make_shared<SlowSink>();
  Daemon daemon(SiteYaml(kBothListeners, "0.05"), slow, 256);
  ASSERT_TRUE(daemon.service);
  SensorStream stream("LK-P102-DE-H", 2560.0, kStartNs, SampleFormat::kFloat32, 10.0,
                      ScaleUnit::kEngineering);
  std::vector<double> decoded;
  // 400 datagrams of 64 samples (~330 bytes each, 130 KB in all: within the socket buffer).
  const auto frames = MakeFrames(stream, TestSignal(128 * 200, 2560.0, 53), 64, 1.0, &decoded);
  auto sender = FrameSender::Connect(FrameSender::Transport::kUdp, "127.0.0.1", daemon.Port(false));
  ASSERT_TRUE(sender.ok());
  for (const auto& frame : frames) ASSERT_TRUE((*sender)->Send(frame).ok());
  // Every datagram the daemon read was either processed or dropped and counted.
  EXPECT_TRUE(WaitUntil([&] {
    daemon.service->Drain();
    const auto sources = daemon.service->Sources();
    return sources.frames > 0 &&
           sources.frames == daemon.service->PointTotals().blocks + sources.dropped_full &&
           sources.frames == frames.size();
  })) << "frames "
      << daemon.service->Sources().frames << ", processed " << daemon.service->PointTotals().blocks
      << ", dropped " << daemon.service->Sources().dropped_full;
  EXPECT_GT(daemon.service->Sources().dropped_full, 0u);
  EXPECT_EQ(daemon.service->Sources().paused_full, 0u);
  // The dropped samples never reached the point (a later accepted frame, if any, shows the drop
  // as a sequence gap; drops at the very end of the burst show nowhere else).
  EXPECT_EQ(daemon.service->PointTotals().samples + 64 * daemon.service->Sources().dropped_full,
            128u * 200u);
}

}  // namespace
}  // namespace spinward::daemon
