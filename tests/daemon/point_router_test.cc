// PointRouter: blocks from several threads reach the right point in order (each point's records
// equal the batch estimator over its own stream), bounded queues refuse when a point is behind,
// unknown sensors are counted, and a reload keeps, restarts, adds and removes points without
// losing the samples of an interval in progress.
#include "spinward/daemon/point_router.h"

#include <gtest/gtest.h>

#include <condition_variable>
#include <filesystem>
#include <fstream>
#include <map>
#include <mutex>
#include <thread>

#include "daemon/pipeline_reference.h"
#include "spinward/daemon/record_sink.h"

namespace spinward::daemon {
namespace {

using testing::ExpectedRecords;
using testing::ExpectRecordsMatch;
using testing::TestSignal;

constexpr double kRate = 2560.0;
constexpr std::int64_t kStartNs = 1'796'112'000'000'000'000;  // 2026-12-01T06:00:00Z

PointSettings Point(const std::string& id, const std::string& sensor) {
  PointSettings s;
  s.point_id = id;
  s.sensor_id = sensor;
  s.sample_rate_hz = kRate;
  s.welch.sample_rate_hz = kRate;
  s.welch.segment_length = 256;
  s.welch.overlap = 128;
  s.welch.segments_per_average = 8;
  s.bands = {{"velocity", 10.0, 1000.0, estimators::Unit::kMillimetresPerSecond}};
  return s;
}

SampleBlock Block(const std::string& sensor, const std::vector<double>& x, std::size_t pos,
                  std::size_t n, std::uint64_t sequence) {
  SampleBlock block;
  block.sensor_id = sensor;
  block.sample_rate_hz = kRate;
  block.first_sample_ns = kStartNs + static_cast<std::int64_t>(pos) * 390'625;  // 1e9 / 2560
  block.sequence = sequence;
  block.samples.assign(x.begin() + static_cast<std::ptrdiff_t>(pos),
                       x.begin() + static_cast<std::ptrdiff_t>(pos + n));
  return block;
}

std::vector<storage::MeasurementRecord> Of(const std::vector<storage::MeasurementRecord>& all,
                                           const std::string& point) {
  std::vector<storage::MeasurementRecord> mine;
  for (const auto& r : all)
    if (r.point_id == point) mine.push_back(r);
  return mine;
}

// Offers until queued (the router answers kFull while the point is behind).
void OfferAll(PointRouter& router, SampleBlock block) {
  for (;;) {
    SampleBlock copy = block;
    const auto result = router.Offer(std::move(copy));
    ASSERT_NE(result, OfferResult::kUnknownSensor);
    if (result == OfferResult::kQueued) return;
    std::this_thread::yield();
  }
}

TEST(PointRouter, EachPointFromManyThreadsEqualsTheBatchEstimatorOverItsStream) {
  auto sink = std::make_shared<CollectingSink>();
  PointRouter router(RouterOptions{2, 4096}, sink);
  std::vector<PointSettings> points = {Point("P101-DE-H", "LK-P101-DE-H"),
                                       Point("P102-DE-H", "LK-P102-DE-H"),
                                       Point("F201-DE-H", "LK-F201-DE-H")};
  ASSERT_TRUE(router.Configure(points).ok());
  const std::size_t n = 256 + 128 * 40 + 77;
  std::vector<std::vector<double>> signals;
  for (std::size_t p = 0; p < points.size(); ++p) signals.push_back(TestSignal(n, kRate, 20 + p));

  // One sender thread per point, each with its own block size, all at once.
  std::vector<std::thread> senders;
  const std::size_t sizes[] = {1, 97, 1024};
  for (std::size_t p = 0; p < points.size(); ++p) {
    senders.emplace_back([&, p] {
      std::uint64_t sequence = 0;
      for (std::size_t pos = 0; pos < n; pos += sizes[p]) {
        OfferAll(router, Block(points[p].sensor_id, signals[p], pos, std::min(sizes[p], n - pos),
                               sequence++));
      }
    });
  }
  for (auto& t : senders) t.join();
  router.FlushAll();
  const auto all = sink->Records();
  for (std::size_t p = 0; p < points.size(); ++p) {
    SCOPED_TRACE(points[p].point_id);
    ExpectRecordsMatch(Of(all, points[p].point_id),
                       ExpectedRecords({{signals[p], kStartNs}}, points[p], /*flush=*/true));
  }
  const auto totals = router.Totals();
  EXPECT_EQ(totals.samples, 3 * n);
  EXPECT_EQ(totals.sequence_gaps, 0u);
  EXPECT_EQ(totals.queued_samples, 0u);
}

TEST(PointRouter, BlocksDecodedIntoRecycledBuffersGiveTheSameRecords) {
  // A source decodes each block into SpareSampleBuffer(): the memory of a block already processed.
  // Recycling must never hand out a buffer still queued or being processed, so the records still
  // equal the batch estimator over the stream (SciPy-checked in pipeline_reference.h), and the
  // buffers do come back.
  auto sink = std::make_shared<CollectingSink>();
  PointRouter router(RouterOptions{2, 4096}, sink);
  const PointSettings point = Point("P101-DE-H", "LK-P101-DE-H");
  ASSERT_TRUE(router.Configure({point}).ok());
  const std::size_t n = 256 + 128 * 40 + 77;
  const std::vector<double> signal = TestSignal(n, kRate, 31);
  const std::size_t block_size = 256;
  std::size_t recycled = 0;
  std::uint64_t sequence = 0;
  for (std::size_t pos = 0; pos < n; pos += block_size) {
    const std::size_t count = std::min(block_size, n - pos);
    SampleBlock block = Block(point.sensor_id, signal, pos, 0, sequence++);
    block.samples = router.SpareSampleBuffer();  // old samples in it: assign overwrites them
    if (block.samples.capacity() >= count) ++recycled;
    block.samples.assign(signal.begin() + static_cast<std::ptrdiff_t>(pos),
                         signal.begin() + static_cast<std::ptrdiff_t>(pos + count));
    while (router.Offer(std::move(block)) == OfferResult::kFull) std::this_thread::yield();
    if (pos % (4 * block_size) == 0) router.Drain();  // let some come back mid-stream
  }
  router.FlushAll();
  ExpectRecordsMatch(sink->Records(), ExpectedRecords({{signal, kStartNs}}, point, true));
  EXPECT_GT(recycled, 0u) << "no processed block's buffer was handed out again";
  EXPECT_GE(router.SpareSampleBuffer().capacity(), block_size);
}

TEST(PointRouter, WorkerThreadsCarryTheirNameForTopAndTheBench) {
  // Linux shows a thread's name in /proc/self/task/*/comm (proc(5)); `top -H` reads it there.
  auto count_named = [] {
    int n = 0;
    for (const auto& task : std::filesystem::directory_iterator("/proc/self/task")) {
      std::ifstream comm(task.path() / "comm");
      std::string name;
      std::getline(comm, name);
      n += name == "spw-points";
    }
    return n;
  };
  const int before = count_named();
  {
    PointRouter router(RouterOptions{3, 4096}, std::make_shared<CollectingSink>());
    EXPECT_EQ(count_named() - before, 3);
  }
  EXPECT_EQ(count_named(), before);
}

TEST(PointRouter, UnknownSensorIsRefusedAndCounted) {
  PointRouter router(RouterOptions{1, 4096}, std::make_shared<CollectingSink>());
  ASSERT_TRUE(router.Configure({Point("P101-DE-H", "LK-P101-DE-H")}).ok());
  const std::vector<double> x(64, 0.0);
  EXPECT_EQ(router.Offer(Block("LK-P999-DE-H", x, 0, 64, 0)), OfferResult::kUnknownSensor);
  EXPECT_EQ(router.Offer(Block("lk-p101-de-h", x, 0, 64, 0)), OfferResult::kUnknownSensor)
      << "sensor ids compare byte for byte (docs/protocol.md)";
  EXPECT_TRUE(router.KnowsSensor("LK-P101-DE-H"));
  EXPECT_EQ(router.Totals().unknown_sensor, 2u);
}

// A sink that holds the worker inside Consume until the test opens the gate.
class GateSink final : public RecordSink {
 public:
  void Consume(const storage::MeasurementRecord&) override {
    std::unique_lock lock(mutex_);
    ++entered_;
    changed_.notify_all();
    changed_.wait(lock, [&] { return open_; });
  }
  void WaitEntered() {
    std::unique_lock lock(mutex_);
    changed_.wait_for(lock, std::chrono::seconds(10), [&] { return entered_ > 0; });
  }
  void Open() {
    std::lock_guard lock(mutex_);
    open_ = true;
    changed_.notify_all();
  }
  int entered() {
    std::lock_guard lock(mutex_);
    return entered_;
  }

 private:
  std::mutex mutex_;
  std::condition_variable changed_;
  int entered_ = 0;
  bool open_ = false;
};

TEST(PointRouter, ABehindPointRefusesOverItsLimitButAnIdlePointTakesAnyBlock) {
  auto gate = std::make_shared<GateSink>();
  PointRouter router(RouterOptions{1, 1000}, gate);
  ASSERT_TRUE(router.Configure({Point("P101-DE-H", "LK-P101-DE-H")}).ok());
  const auto x = TestSignal(20000, kRate, 30);
  // 1100 samples complete no average; 52 more end the first one (256 + 7 * 128 = 1152), so the
  // worker then waits inside the sink with those 52 samples still counted as queued.
  EXPECT_EQ(router.Offer(Block("LK-P101-DE-H", x, 0, 1100, 0)), OfferResult::kQueued);
  router.Drain();
  EXPECT_EQ(router.Offer(Block("LK-P101-DE-H", x, 1100, 52, 1)), OfferResult::kQueued);
  gate->WaitEntered();
  ASSERT_EQ(gate->entered(), 1);
  // The point is behind: 52 + 600 + 348 fill its 1000 samples, one more does not fit.
  EXPECT_EQ(router.Offer(Block("LK-P101-DE-H", x, 1152, 600, 2)), OfferResult::kQueued);
  EXPECT_EQ(router.Offer(Block("LK-P101-DE-H", x, 1752, 348, 3)), OfferResult::kQueued);
  EXPECT_EQ(router.Offer(Block("LK-P101-DE-H", x, 2100, 1, 4)), OfferResult::kFull);
  EXPECT_EQ(router.Totals().refused_full, 1u);
  EXPECT_EQ(router.Totals().queued_samples, 1000u);
  gate->Open();
  router.Drain();
  EXPECT_EQ(router.Totals().queued_samples, 0u);
  // An idle point takes a block longer than its whole limit: refusing it would stall a TCP
  // sender of large frames for good.
  EXPECT_EQ(router.Offer(Block("LK-P101-DE-H", x, 2100, 5000, 4)), OfferResult::kQueued);
  router.Drain();
  EXPECT_EQ(router.Totals().samples, 7100u);
  EXPECT_EQ(router.Totals().sequence_gaps, 0u);
}

TEST(PointRouter, ConfigureRefusesAnInvalidPointAndChangesNothing) {
  auto sink = std::make_shared<CollectingSink>();
  PointRouter router(RouterOptions{1, 4096}, sink);
  ASSERT_TRUE(router.Configure({Point("P101-DE-H", "LK-P101-DE-H")}).ok());
  auto bad = Point("P102-DE-H", "LK-P102-DE-H");
  bad.bands[0].hi_hz = 1500.0;  // above the Nyquist frequency 1280 Hz
  auto result = router.Configure({Point("P101-DE-H", "LK-P101-DE-H"), bad});
  ASSERT_FALSE(result.ok());
  EXPECT_NE(result.message().find("P102-DE-H"), std::string::npos) << result.message();
  EXPECT_NE(result.message().find("1500"), std::string::npos) << result.message();
  EXPECT_TRUE(router.KnowsSensor("LK-P101-DE-H"));
  EXPECT_FALSE(router.KnowsSensor("LK-P102-DE-H"));

  auto twice =
      router.Configure({Point("P101-DE-H", "LK-P101-DE-H"), Point("P102-DE-H", "LK-P101-DE-H")});
  ASSERT_FALSE(twice.ok());
  EXPECT_NE(twice.message().find("LK-P101-DE-H"), std::string::npos) << twice.message();
}

TEST(PointRouter, ReloadKeepsUnchangedPointsAndFlushesChangedOrRemovedOnes) {
  auto sink = std::make_shared<CollectingSink>();
  PointRouter router(RouterOptions{2, 1 << 16}, sink);
  const auto kept = Point("P101-DE-H", "LK-P101-DE-H");
  const auto changed = Point("P102-DE-H", "LK-P102-DE-H");
  const auto removed = Point("F201-DE-H", "LK-F201-DE-H");
  ASSERT_TRUE(router.Configure({kept, changed, removed}).ok());

  const std::size_t first = 256 + 128 * 12;  // 13 segments: one average of 8 and 5 in progress
  const std::size_t total = 256 + 128 * 30;
  const auto a = TestSignal(total, kRate, 40);
  const auto b = TestSignal(first, kRate, 41);
  const auto c = TestSignal(first, kRate, 42);
  ASSERT_EQ(router.Offer(Block(kept.sensor_id, a, 0, first, 0)), OfferResult::kQueued);
  ASSERT_EQ(router.Offer(Block(changed.sensor_id, b, 0, first, 0)), OfferResult::kQueued);
  ASSERT_EQ(router.Offer(Block(removed.sensor_id, c, 0, first, 0)), OfferResult::kQueued);
  router.Drain();

  auto changed2 = changed;
  changed2.bands[0].hi_hz = 1200.0;
  const auto added = Point("P102-NDE-H", "LK-P102-NDE-H");
  auto summary = router.Configure({kept, changed2, added});
  ASSERT_TRUE(summary.ok()) << summary.message();
  EXPECT_EQ(summary->kept, std::vector<std::string>{"P101-DE-H"});
  EXPECT_EQ(summary->restarted, std::vector<std::string>{"P102-DE-H"});
  EXPECT_EQ(summary->added, std::vector<std::string>{"P102-NDE-H"});
  EXPECT_EQ(summary->removed, std::vector<std::string>{"F201-DE-H"});
  EXPECT_FALSE(router.KnowsSensor(removed.sensor_id));

  // Changed and removed points ended their interval in progress at the reload (5 segments).
  const auto at_reload = sink->Records();
  ExpectRecordsMatch(Of(at_reload, "P102-DE-H"), ExpectedRecords({{b, kStartNs}}, changed, true));
  ExpectRecordsMatch(Of(at_reload, "F201-DE-H"), ExpectedRecords({{c, kStartNs}}, removed, true));
  ASSERT_EQ(Of(at_reload, "P102-DE-H").size(), 2u);
  EXPECT_EQ(Of(at_reload, "P102-DE-H")[1].segment_count, 5u);

  // The kept point goes on as if nothing happened: its records equal one uninterrupted stream.
  ASSERT_EQ(router.Offer(Block(kept.sensor_id, a, first, total - first, 1)), OfferResult::kQueued);
  router.FlushAll();
  ExpectRecordsMatch(Of(sink->Records(), "P101-DE-H"),
                     ExpectedRecords({{a, kStartNs}}, kept, true));
  EXPECT_EQ(router.Totals().sequence_gaps, 0u);
  // Totals never go backwards: the removed point's samples still count.
  EXPECT_EQ(router.Totals().samples, first + first + first + (total - first));
}

}  // namespace
}  // namespace spinward::daemon
