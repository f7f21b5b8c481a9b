// The drop directory: a WAV written by Python's own wave module (tests/data/daemon/write_wav.py) is
// processed into records equal to the batch estimator over its samples and moved to done/; a
// truncated WAV, a WAV at the wrong rate and a file no pattern matches go to rejected/ with a
// NAME.reason.txt naming the problem; a file of protocol frames is processed like a stream. Driven
// by ScanOnce, and once through a running MonitoringService configured from YAML.
#include "spinward/daemon/drop_directory.h"

#include <fcntl.h>
#include <sys/stat.h>

#include <gtest/gtest.h>

#include <fstream>
#include <sstream>

#include "daemon/pipeline_reference.h"
#include "daemon/wait_until.h"
#include "spinward/config/site_loader.h"
#include "spinward/daemon/frame_codec.h"
#include "spinward/daemon/frame_sender.h"
#include "spinward/daemon/monitoring_service.h"
#include "spinward/daemon/point_router.h"
#include "spinward/daemon/record_sink.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using testing::ExpectedRecords;
using testing::ExpectRecordsMatch;
using testing::TestSignal;
using testing::WaitUntil;

constexpr double kRate = 2560.0;
constexpr std::int64_t kFileTimeS = 1'796'112'000;  // 2026-12-01T06:00:00Z

PointSettings Point() {
  PointSettings s;
  s.point_id = "P101-DE-H";
  s.sensor_id = "LK-P101-DE-H";
  s.sample_rate_hz = kRate;
  s.welch.sample_rate_hz = kRate;
  s.welch.segment_length = 256;
  s.welch.overlap = 128;
  s.welch.segments_per_average = 10;
  s.bands = {{"velocity", 10.0, 1000.0, estimators::Unit::kMillimetresPerSecond}};
  return s;
}

std::string ReadText(const fs::path& path) {
  std::ifstream in(path);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

// int16 samples of a test signal, and the values a WAV reader must return for them: integer PCM
// scaled by 1 / 2^15 to [-1, 1) (common practice for 16-bit PCM, e.g. libsndfile's float reads).
struct Pcm {
  std::vector<std::int16_t> counts;
  std::vector<double> values;
};

Pcm MakePcm(std::size_t n, std::uint64_t seed) {
  Pcm pcm;
  for (double v : TestSignal(n, kRate, seed, 0.15)) {
    const auto c = static_cast<std::int16_t>(std::lround(v * 32767.0));
    pcm.counts.push_back(c);
    pcm.values.push_back(static_cast<double>(c) / 32768.0);
  }
  return pcm;
}

// Writes `pcm` as a WAV through Python's wave module; `cut` bytes are then chopped off the end.
void WriteWav(const fs::path& out, const Pcm& pcm, int rate, std::size_t cut = 0) {
  const fs::path raw = out.parent_path().parent_path() / (out.filename().string() + ".s16");
  {
    std::ofstream f(raw, std::ios::binary);
    for (std::int16_t c : pcm.counts) {
      const auto u = static_cast<std::uint16_t>(c);
      const char bytes[2] = {static_cast<char>(u & 0xFF), static_cast<char>(u >> 8)};
      f.write(bytes, 2);
    }
  }
  std::string command = spinward::testing::ReferencePython() + " " +
                        (spinward::testing::TestDataDir() / "daemon" / "write_wav.py").string() +
                        " " + raw.string() + " " + out.string() + " " + std::to_string(rate);
  if (cut) command += " --cut " + std::to_string(cut);
  const auto result = spinward::testing::RunCommand(command);
  ASSERT_EQ(result.exit_code, 0) << command << "\n" << result.error_output;
  fs::remove(raw);
}

// Sets a file's modification time (the daemon takes it as the time of the last sample).
void SetFileTime(const fs::path& file, std::int64_t seconds) {
  timespec times[2] = {{seconds, 0}, {seconds, 0}};
  ASSERT_EQ(::utimensat(AT_FDCWD, file.c_str(), times, 0), 0) << file;
}

struct Fixture {
  fs::path dir;
  std::shared_ptr<CollectingSink> sink = std::make_shared<CollectingSink>();
  std::unique_ptr<PointRouter> router;
  std::unique_ptr<RouterConsumer> consumer;
  std::vector<std::string> reports;
  std::unique_ptr<DropDirectory> drop;

  explicit Fixture(const std::string& name, std::chrono::milliseconds settle = {}) {
    dir = spinward::testing::FreshTempDir(name) / "spool";
    fs::create_directories(dir / "done");
    fs::create_directories(dir / "rejected");
    router = std::make_unique<PointRouter>(RouterOptions{1, 4096}, sink);
    EXPECT_TRUE(router->Configure({Point()}).ok());
    consumer = std::make_unique<RouterConsumer>(*router);
    DropDirectoryOptions options;
    options.path = dir;
    options.settle_time = settle;
    options.block_samples = 1000;
    DropFileRule wav;
    wav.pattern = "P101_DE_*.wav";
    wav.point_id = "P101-DE-H";
    wav.sensor_id = "LK-P101-DE-H";
    wav.point_sample_rate_hz = kRate;
    DropFileRule frames = wav;
    frames.pattern = "P101_DE_*.frames";
    frames.frames = true;
    options.rules = {wav, frames};
    drop = std::make_unique<DropDirectory>(
        options, *consumer,
        [this](const std::string&, const std::string& message) { reports.push_back(message); });
  }
};

TEST(DropDirectory, AGoodWavIsProcessedLikeTheBatchEstimatorAndMovedToDone) {
  Fixture f("drop-good");
  const std::size_t n = 256 + 128 * 24 + 90;  // 25 segments: two averages and 5 segments more
  const auto pcm = MakePcm(n, 60);
  WriteWav(f.dir / "P101_DE_20261201T060000.wav", pcm, 2560);
  SetFileTime(f.dir / "P101_DE_20261201T060000.wav", kFileTimeS);
  EXPECT_EQ(f.drop->ScanOnce(), 1u);
  f.router->FlushAll();
  EXPECT_TRUE(fs::exists(f.dir / "done" / "P101_DE_20261201T060000.wav"));
  EXPECT_FALSE(fs::exists(f.dir / "P101_DE_20261201T060000.wav"));
  EXPECT_EQ(f.drop->counters().files_done.load(), 1u);
  // The last sample is at the file's modification time: the first is n / fs before it.
  const std::int64_t first_ns = kFileTimeS * 1'000'000'000 - static_cast<std::int64_t>(n) * 390'625;
  ExpectRecordsMatch(f.sink->Records(), ExpectedRecords({{pcm.values, first_ns}}, Point(), true));
}

TEST(DropDirectory, BadFilesAreRejectedWithTheirReason) {
  Fixture f("drop-bad");
  const auto pcm = MakePcm(3000, 61);
  WriteWav(f.dir / "P101_DE_truncated.wav", pcm, 2560, /*cut=*/1001);
  WriteWav(f.dir / "P101_DE_wrong_rate.wav", pcm, 8000);
  WriteWav(f.dir / "notes.wav", pcm, 2560);
  EXPECT_EQ(f.drop->ScanOnce(), 3u);
  struct Case {
    const char* name;
    const char* reason_mentions;
  };
  for (const Case& c :
       {Case{"P101_DE_truncated.wav", "truncated"}, Case{"P101_DE_wrong_rate.wav", "8000"},
        Case{"notes.wav", "no drop_directory.files pattern matches 'notes.wav'"}}) {
    SCOPED_TRACE(c.name);
    EXPECT_TRUE(fs::exists(f.dir / "rejected" / c.name));
    const std::string reason = ReadText(f.dir / "rejected" / (std::string(c.name) + ".reason.txt"));
    EXPECT_NE(reason.find(c.reason_mentions), std::string::npos) << reason;
    bool reported = false;
    for (const auto& line : f.reports) reported |= line.find(c.name) != std::string::npos;
    EXPECT_TRUE(reported) << "the rejection was not logged";
  }
  EXPECT_EQ(f.drop->counters().files_rejected.load(), 3u);
  f.router->Drain();
  EXPECT_EQ(f.router->Totals().samples, 0u) << "samples of a rejected file reached the point";
  EXPECT_EQ(f.drop->ScanOnce(), 0u) << "rejected files are not read again";
}

TEST(DropDirectory, AFramesFileIsProcessedWithItsOwnTimesAndSequence) {
  Fixture f("drop-frames");
  const std::size_t n = 256 + 128 * 19;  // exactly two averages of 10 segments
  const auto x = TestSignal(n, kRate, 62);
  const std::int64_t start_ns = kFileTimeS * 1'000'000'000;
  SensorStream stream("LK-P101-DE-H", kRate, start_ns, SampleFormat::kFloat32, 10.0,
                      ScaleUnit::kEngineering);
  std::vector<double> decoded;
  {
    std::ofstream out(f.dir / "P101_DE_0003.frames", std::ios::binary);
    for (std::size_t pos = 0; pos < n; pos += 300) {
      auto frame = stream.NextFrame(
          std::span<const double>(x.data() + pos, std::min<std::size_t>(300, n - pos)));
      ASSERT_TRUE(frame.ok());
      auto back = DecodeFrame(*frame);
      ASSERT_TRUE(back.ok());
      decoded.insert(decoded.end(), back.value().samples.begin(), back.value().samples.end());
      out.write(reinterpret_cast<const char*>(frame->data()),
                static_cast<std::streamsize>(frame->size()));
    }
  }
  EXPECT_EQ(f.drop->ScanOnce(), 1u);
  f.router->FlushAll();
  EXPECT_TRUE(fs::exists(f.dir / "done" / "P101_DE_0003.frames"));
  ExpectRecordsMatch(f.sink->Records(), ExpectedRecords({{decoded, start_ns}}, Point(), true));
  EXPECT_EQ(f.sink->Records().size(), 2u);
}

TEST(DropDirectory, AFramesFileWithABadFrameOrForAnotherSensorIsRejected) {
  Fixture f("drop-frames-bad");
  std::ifstream good_in(spinward::testing::TestDataDir() / "frames" / "doc_example_int16.bin",
                        std::ios::binary);
  const std::string good(std::istreambuf_iterator<char>(good_in), {});
  std::ifstream bad_in(spinward::testing::TestDataDir() / "frames" / "bad_crc.bin",
                       std::ios::binary);
  const std::string bad(std::istreambuf_iterator<char>(bad_in), {});
  std::ifstream other_in(spinward::testing::TestDataDir() / "frames" / "good_float32.bin",
                         std::ios::binary);
  const std::string other(std::istreambuf_iterator<char>(other_in), {});
  std::ofstream(f.dir / "P101_DE_crc.frames", std::ios::binary) << good << bad;
  std::ofstream(f.dir / "P101_DE_other.frames", std::ios::binary) << other;
  std::ofstream(f.dir / "P101_DE_cut.frames", std::ios::binary) << good.substr(0, 40);
  EXPECT_EQ(f.drop->ScanOnce(), 3u);
  EXPECT_NE(ReadText(f.dir / "rejected" / "P101_DE_crc.frames.reason.txt").find("frame 1: bad_crc"),
            std::string::npos);
  EXPECT_NE(ReadText(f.dir / "rejected" / "P101_DE_other.frames.reason.txt").find("LK-P102-DE-V"),
            std::string::npos);
  EXPECT_NE(
      ReadText(f.dir / "rejected" / "P101_DE_cut.frames.reason.txt").find("ends inside a frame"),
      std::string::npos);
}

TEST(DropDirectory, AFileStillBeingWrittenIsLeftAlone) {
  Fixture f("drop-settle", std::chrono::hours(1));
  WriteWav(f.dir / "P101_DE_new.wav", MakePcm(1000, 63), 2560);
  EXPECT_EQ(f.drop->ScanOnce(), 0u);
  EXPECT_TRUE(fs::exists(f.dir / "P101_DE_new.wav"));
}

TEST(DropDirectory, ARunningServiceWatchesTheConfiguredDirectory) {
  const fs::path dir = spinward::testing::FreshTempDir("drop-service") / "spool";
  const std::string yaml = R"(site:
  name: Larkfield booster pump station (drop test)
machines:
  - {id: P-101, kind: pump, speed_rpm: 1480}
profiles:
  - {id: narrow, segment: 256, overlap: 128, interval_s: 0.5}
points:
  - id: P101-DE-H
    machine: P-101
    sensor: LK-P101-DE-H
    units: m/s^2
    sample_rate_hz: 2560
    profile: narrow
    bands:
      - {name: velocity, lo_hz: 10, hi_hz: 1000}
drop_directory:
  path: )" + dir.string() + R"(
  poll_interval_s: 0.05
  files:
    - {pattern: "P101_DE_*.wav", point: P101-DE-H}
)";
  auto loaded = config::ParseSiteText(yaml, "drop.yaml");
  for (const auto& p : loaded.problems) ADD_FAILURE() << p.ToString();
  auto sink = std::make_shared<CollectingSink>();
  ServiceOptions options;
  options.worker_threads = 1;
  options.sink = sink;
  auto service = MonitoringService::Create(loaded.site, options);
  ASSERT_TRUE(service.ok()) << service.message();
  ASSERT_TRUE((*service)->Start().ok());
  ASSERT_TRUE(fs::exists(dir / "done"));
  const std::size_t n = 256 + 128 * 9;  // one average of round(0.5 * 2560 / 128) = 10 segments
  const auto pcm = MakePcm(n, 64);
  // Written under a hidden name (left alone), then renamed in with an old time (settled).
  WriteWav(dir / ".P101_DE_1.wav", pcm, 2560);
  SetFileTime(dir / ".P101_DE_1.wav", kFileTimeS);
  fs::rename(dir / ".P101_DE_1.wav", dir / "P101_DE_1.wav");
  EXPECT_TRUE(WaitUntil([&] { return (*service)->Sources().files_done == 1; }));
  (*service)->Drain();
  const std::int64_t first_ns = kFileTimeS * 1'000'000'000 - static_cast<std::int64_t>(n) * 390'625;
  auto settings = Point();
  ExpectRecordsMatch(sink->Records(), ExpectedRecords({{pcm.values, first_ns}}, settings, false));
  (*service)->Stop();
}

}  // namespace
}  // namespace spinward::daemon
