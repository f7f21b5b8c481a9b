// ChannelPipeline against the batch estimator: the records a stream of blocks produces must equal
// estimators::Welch over the same samples (that batch estimator is itself checked against
// scipy.signal.welch in tests/estimators; here it is the reference), whatever the block sizes,
// across gaps, rejected blocks and a final flush. See pipeline_reference.h for how the expected
// records are built.
#include "spinward/daemon/channel_pipeline.h"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <random>

#include "daemon/pipeline_reference.h"
#include "spinward/daemon/record_sink.h"

namespace spinward::daemon {
namespace {

using testing::ExpectedRecords;
using testing::ExpectRecordsMatch;
using testing::Near;
using testing::Piece;
using testing::TestSignal;

constexpr double kRate = 2560.0;  // 390625 ns per sample, a whole number
constexpr std::int64_t kStartNs = 1'796'112'000'000'000'000;  // 2026-12-01T06:00:00Z

PointSettings Settings() {
  PointSettings s;
  s.point_id = "P101-DE-H";
  s.sensor_id = "LK-P101-DE-H";
  s.sample_rate_hz = kRate;
  s.welch.sample_rate_hz = kRate;
  s.welch.segment_length = 256;
  s.welch.overlap = 128;
  s.welch.segments_per_average = 10;
  s.bands = {{"velocity", 10.0, 1000.0, estimators::Unit::kMillimetresPerSecond},
             {"bearing", 300.0, 1280.0, estimators::Unit::kG},
             {"low", 2.0, 10.0, estimators::Unit::kMicrometres}};
  return s;
}

std::int64_t TimeOf(std::int64_t first_ns, std::size_t index) {
  return first_ns + static_cast<std::int64_t>(index) * 390'625;  // 1e9 / 2560 exactly
}

// Feeds `x` (first sample at first_ns) in blocks of the given sizes, cycling through them.
void Feed(ChannelPipeline& pipeline, const std::vector<double>& x, std::int64_t first_ns,
          const std::vector<std::size_t>& sizes, std::uint64_t& sequence, bool in_volts = false) {
  std::size_t pos = 0;
  for (std::size_t k = 0; pos < x.size(); ++k) {
    const std::size_t n = std::min(sizes[k % sizes.size()], x.size() - pos);
    SampleBlock block;
    block.sensor_id = pipeline.settings().sensor_id;
    block.sample_rate_hz = pipeline.settings().sample_rate_hz;
    block.first_sample_ns = TimeOf(first_ns, pos);
    block.sequence = sequence++;
    block.in_volts = in_volts;
    block.samples.assign(x.begin() + static_cast<std::ptrdiff_t>(pos),
                         x.begin() + static_cast<std::ptrdiff_t>(pos + n));
    auto outcome = pipeline.Process(block);
    ASSERT_EQ(outcome.verdict, BlockVerdict::kAccepted) << outcome.message;
    pos += n;
  }
}

std::unique_ptr<ChannelPipeline> Make(const PointSettings& settings,
                                      std::shared_ptr<CollectingSink> sink) {
  auto pipeline = ChannelPipeline::Create(settings, sink);
  EXPECT_TRUE(pipeline.ok()) << pipeline.message();
  return pipeline.ok() ? std::move(pipeline).value() : nullptr;
}

// 35 segments: three complete averages of 10, and 5 segments of a fourth, plus 50 samples that
// complete no segment.
constexpr std::size_t kSamples = 256 + 128 * 34 + 50;

TEST(ChannelPipeline, RecordsEqualBatchWelchWhateverTheBlockSizes) {
  const auto x = TestSignal(kSamples, kRate, 1);
  const auto expected = ExpectedRecords({{x, kStartNs}}, Settings(), /*flush=*/false);
  ASSERT_EQ(expected.size(), 3u);
  const std::vector<std::vector<std::size_t>> framings = {
      {1}, {7}, {128}, {255, 257}, {1000}, {3, 4096, 1, 640}, {kSamples}};
  for (const auto& sizes : framings) {
    SCOPED_TRACE("first block size " + std::to_string(sizes[0]));
    auto sink = std::make_shared<CollectingSink>();
    auto pipeline = Make(Settings(), sink);
    std::uint64_t sequence = 0;
    Feed(*pipeline, x, kStartNs, sizes, sequence);
    ExpectRecordsMatch(sink->Records(), expected);
    EXPECT_EQ(pipeline->counters().segments.load(), 35u);
    EXPECT_EQ(pipeline->counters().samples.load(), kSamples);
    EXPECT_EQ(pipeline->counters().records.load(), 3u);
  }
}

TEST(ChannelPipeline, IndicatorsCoverExactlyTheIntervalsSamples) {
  // The first interval runs from the first sample to the end of its 10th segment (L + 9H samples);
  // each later one from there to the end of its own 10th segment (10H samples).
  const auto x = TestSignal(kSamples, kRate, 2);
  auto sink = std::make_shared<CollectingSink>();
  auto pipeline = Make(Settings(), sink);
  std::uint64_t sequence = 0;
  Feed(*pipeline, x, kStartNs, {333}, sequence);
  const auto records = sink->Records();
  ASSERT_EQ(records.size(), 3u);
  const std::size_t bounds[] = {0, 256 + 9 * 128, 256 + 19 * 128, 256 + 29 * 128};
  for (std::size_t r = 0; r < 3; ++r) {
    SCOPED_TRACE("record " + std::to_string(r));
    estimators::IndicatorAccumulator reference;
    reference.Add(std::span<const double>(x.data() + bounds[r], bounds[r + 1] - bounds[r]));
    const auto want = reference.Current();
    const auto& got = records[r].indicators;
    EXPECT_EQ(got.count, bounds[r + 1] - bounds[r]);
    EXPECT_DOUBLE_EQ(got.min, want.min);  // extremes are picked, not computed: exactly equal
    EXPECT_DOUBLE_EQ(got.max, want.max);
    EXPECT_TRUE(Near(got.rms, want.rms, 1e-10));
    EXPECT_TRUE(Near(got.kurtosis, want.kurtosis, 1e-10));
    EXPECT_EQ(records[r].interval_start_ns, TimeOf(kStartNs, bounds[r]));
    EXPECT_EQ(records[r].interval_end_ns, TimeOf(kStartNs, bounds[r + 1]));
  }
}

TEST(ChannelPipeline, FlushEmitsThePartialInterval) {
  const auto x = TestSignal(kSamples, kRate, 3);
  auto sink = std::make_shared<CollectingSink>();
  auto pipeline = Make(Settings(), sink);
  std::uint64_t sequence = 0;
  Feed(*pipeline, x, kStartNs, {500}, sequence);
  pipeline->Flush();
  const auto records = sink->Records();
  ExpectRecordsMatch(records, ExpectedRecords({{x, kStartNs}}, Settings(), /*flush=*/true));
  ASSERT_EQ(records.size(), 4u);
  EXPECT_EQ(records[3].segment_count, 5u);
  // The flushed record's indicators take every sample after the third interval, the 50 samples
  // that completed no segment included.
  EXPECT_EQ(records[3].indicators.count, kSamples - (256 + 29 * 128));
  // A second flush has nothing left to emit.
  pipeline->Flush();
  EXPECT_EQ(sink->Records().size(), 4u);
}

TEST(ChannelPipeline, SequenceGapRestartsSegmentingLikeBatchOverThePieces) {
  // Piece A ends mid-segment; after a lost frame, piece B starts new segments from its own first
  // sample; the average in progress keeps A's segments (docs/protocol.md: no segment spans
  // missing samples).
  const auto a = TestSignal(1000, kRate, 4);
  const auto b = TestSignal(3000, kRate, 5);
  const std::int64_t b_start = TimeOf(kStartNs, 1000 + 512);  // 512 samples were lost
  for (std::size_t size : {1u, 100u, 999u}) {
    SCOPED_TRACE("block size " + std::to_string(size));
    auto sink = std::make_shared<CollectingSink>();
    auto pipeline = Make(Settings(), sink);
    std::uint64_t sequence = 0;
    Feed(*pipeline, a, kStartNs, {size}, sequence);
    sequence += 3;  // three frames lost
    Feed(*pipeline, b, b_start, {size}, sequence);
    pipeline->Flush();
    ExpectRecordsMatch(sink->Records(),
                       ExpectedRecords({{a, kStartNs}, {b, b_start}}, Settings(), true));
    EXPECT_EQ(pipeline->counters().sequence_gaps.load(), 1u);
    EXPECT_EQ(pipeline->counters().time_jumps.load(), 0u);
    // Segments: A gives floor((1000 - 256) / 128) + 1 = 6, B gives floor((3000 - 256) / 128) + 1
    // = 22 (the scipy.signal.welch segment count, docs/estimator.md).
    EXPECT_EQ(pipeline->counters().segments.load(), 28u);
  }
}

TEST(ChannelPipeline, RepeatedSequenceNumberAlsoRestarts) {
  // docs/protocol.md: s <= last (a duplicate or a restarted sender) also resets the overlap buffer.
  const auto a = TestSignal(700, kRate, 6);
  const auto b = TestSignal(2900, kRate, 7);
  const std::int64_t b_start = TimeOf(kStartNs, 700);
  auto sink = std::make_shared<CollectingSink>();
  auto pipeline = Make(Settings(), sink);
  std::uint64_t sequence = 40;
  Feed(*pipeline, a, kStartNs, {700}, sequence);
  SampleBlock block;
  block.sensor_id = "LK-P101-DE-H";
  block.sample_rate_hz = kRate;
  block.first_sample_ns = b_start;
  block.sequence = 0;  // the box restarted
  block.samples = b;
  auto outcome = pipeline->Process(block);
  EXPECT_TRUE(outcome.restarted);
  EXPECT_NE(outcome.message.find("sequence restart"), std::string::npos) << outcome.message;
  pipeline->Flush();
  ExpectRecordsMatch(sink->Records(),
                     ExpectedRecords({{a, kStartNs}, {b, b_start}}, Settings(), true));
}

TEST(ChannelPipeline, SenderCountingAgainMidIntervalEndsItWithEverySampleAndNoGap) {
  // A box that reconnects starts its frame count at 0 again while its signal time runs on
  // (tests/reliability/soak.py feeds a daemon so). docs/protocol.md: s <= last resets the overlap
  // buffer, and only s > last + 1 means frames were lost. Segments (the scipy.signal.welch count,
  // docs/estimator.md): A = 256 + 14 x 128 + 50 samples gives floor((N - 256) / 128) + 1 = 15 =
  // one average of 10 and 5 over; B = 256 + 11 x 128 gives 12 = one average and 2 over.
  const auto a = TestSignal(256 + 14 * 128 + 50, kRate, 21);
  const auto b = TestSignal(256 + 11 * 128, kRate, 22);
  const std::int64_t b_start = TimeOf(kStartNs, a.size());  // no sample missing in between
  for (std::size_t size : {100u, 333u}) {
    SCOPED_TRACE("block size " + std::to_string(size));
    auto sink = std::make_shared<CollectingSink>();
    auto pipeline = Make(Settings(), sink);
    std::uint64_t sequence = 0;
    Feed(*pipeline, a, kStartNs, {size}, sequence);
    sequence = 0;  // the new connection counts from 0
    Feed(*pipeline, b, b_start, {size}, sequence);
    pipeline->Flush();
    const auto records = sink->Records();
    ExpectRecordsMatch(records, ExpectedRecords({{a, kStartNs}, {b, b_start}}, Settings(), true));
    ASSERT_EQ(records.size(), 4u);
    // The interval the reconnect cut short is stored with the segments it has, its samples
    // running to A's last one (the 50 that completed no segment included).
    EXPECT_EQ(records[1].segment_count, 5u);
    EXPECT_EQ(records[1].interval_end_ns, b_start);
    EXPECT_EQ(records[3].segment_count, 2u);
    std::size_t samples = 0;
    for (std::size_t r = 0; r < records.size(); ++r) {
      samples += records[r].indicators.count;
      if (r > 0) {
        EXPECT_EQ(records[r].interval_start_ns, records[r - 1].interval_end_ns);
      }
      // Nothing was lost: no record carries a gap into the sensor's dropout check.
      EXPECT_EQ(records[r].sequence_gaps, 0u) << "record " << r;
    }
    EXPECT_EQ(samples, a.size() + b.size());
    EXPECT_EQ(pipeline->counters().sequence_gaps.load(), 0u);
    EXPECT_EQ(pipeline->counters().segments.load(), 27u);
  }
}

TEST(ChannelPipeline, LostFramesMarkTheIntervalTheyEnd) {
  // The counterpart: s > last + 1 is a loss, counted once and carried by the record it ends.
  const auto a = TestSignal(1000, kRate, 23);
  const auto b = TestSignal(3000, kRate, 24);
  const std::int64_t b_start = TimeOf(kStartNs, 1000 + 2 * 100);  // two frames of 100 lost
  auto sink = std::make_shared<CollectingSink>();
  auto pipeline = Make(Settings(), sink);
  std::uint64_t sequence = 0;
  Feed(*pipeline, a, kStartNs, {100}, sequence);
  sequence += 2;
  Feed(*pipeline, b, b_start, {100}, sequence);
  pipeline->Flush();
  const auto records = sink->Records();
  ASSERT_EQ(records.size(), 4u);  // A: 6 segments; B: 22 = 10 + 10 + 2
  EXPECT_EQ(records[0].segment_count, 6u);
  EXPECT_EQ(records[0].sequence_gaps, 1u);
  EXPECT_EQ(records[1].sequence_gaps, 0u);
  EXPECT_EQ(pipeline->counters().sequence_gaps.load(), 1u);
}

TEST(ChannelPipeline, TimeJumpRestartsButJitterBelowToleranceDoesNot) {
  const auto a = TestSignal(1300, kRate, 8);
  const auto b = TestSignal(2500, kRate, 9);
  {
    // Sequence continuous, but the clock says 5 ms more passed than the samples account for.
    const std::int64_t b_start = TimeOf(kStartNs, 1300) + 5'000'000;
    auto sink = std::make_shared<CollectingSink>();
    auto pipeline = Make(Settings(), sink);
    std::uint64_t sequence = 0;
    Feed(*pipeline, a, kStartNs, {650}, sequence);
    Feed(*pipeline, b, b_start, {650}, sequence);
    pipeline->Flush();
    ExpectRecordsMatch(sink->Records(),
                       ExpectedRecords({{a, kStartNs}, {b, b_start}}, Settings(), true));
    EXPECT_EQ(pipeline->counters().time_jumps.load(), 1u);
    EXPECT_EQ(pipeline->counters().sequence_gaps.load(), 0u);
  }
  {
    // 0.4 ms of clock jitter, inside the 1 ms tolerance: one continuous stream.
    const std::int64_t b_start = TimeOf(kStartNs, 1300) + 400'000;
    auto sink = std::make_shared<CollectingSink>();
    auto pipeline = Make(Settings(), sink);
    std::uint64_t sequence = 0;
    Feed(*pipeline, a, kStartNs, {650}, sequence);
    Feed(*pipeline, b, b_start, {650}, sequence);
    pipeline->Flush();
    std::vector<double> joined = a;
    joined.insert(joined.end(), b.begin(), b.end());
    ExpectRecordsMatch(sink->Records(), ExpectedRecords({{joined, kStartNs}}, Settings(), true));
    EXPECT_EQ(pipeline->counters().time_jumps.load(), 0u);
  }
}

TEST(ChannelPipeline, WrongRateAndNonFiniteBlocksAreRejectedAndCounted) {
  const auto a = TestSignal(1500, kRate, 10);
  const auto c = TestSignal(2600, kRate, 11);
  auto sink = std::make_shared<CollectingSink>();
  auto pipeline = Make(Settings(), sink);
  std::uint64_t sequence = 0;
  Feed(*pipeline, a, kStartNs, {500}, sequence);

  SampleBlock bad;
  bad.sensor_id = "LK-P101-DE-H";
  bad.sample_rate_hz = 5120.0;  // a box reconfigured to another rate
  bad.first_sample_ns = TimeOf(kStartNs, 1500);
  bad.sequence = sequence++;
  bad.samples.assign(300, 0.5);
  auto outcome = pipeline->Process(bad);
  EXPECT_EQ(outcome.verdict, BlockVerdict::kRateMismatch);
  EXPECT_NE(outcome.message.find("5120"), std::string::npos) << outcome.message;

  bad.sample_rate_hz = kRate;
  bad.sequence = sequence++;
  bad.samples[17] = std::numeric_limits<double>::quiet_NaN();
  outcome = pipeline->Process(bad);
  EXPECT_EQ(outcome.verdict, BlockVerdict::kNonFiniteSamples);
  EXPECT_NE(outcome.message.find("index 17"), std::string::npos) << outcome.message;

  bad.sequence = sequence++;
  bad.samples[17] = 0.0;
  bad.samples[299] = std::numeric_limits<double>::infinity();
  EXPECT_EQ(pipeline->Process(bad).verdict, BlockVerdict::kNonFiniteSamples);

  bad.sequence = sequence++;
  bad.samples[299] = 0.0;
  bad.in_volts = true;  // this point has no sensitivity
  EXPECT_EQ(pipeline->Process(bad).verdict, BlockVerdict::kNotScalable);

  bad.sequence = sequence++;
  bad.in_volts = false;
  bad.samples.clear();
  EXPECT_EQ(pipeline->Process(bad).verdict, BlockVerdict::kEmpty);

  // The samples of the rejected blocks are missing from the stream: C starts a new run.
  const std::int64_t c_start = TimeOf(kStartNs, 1500 + 5 * 300);
  Feed(*pipeline, c, c_start, {500}, sequence);
  pipeline->Flush();
  ExpectRecordsMatch(sink->Records(),
                     ExpectedRecords({{a, kStartNs}, {c, c_start}}, Settings(), true));
  const auto& counters = pipeline->counters();
  EXPECT_EQ(counters.rejected_rate.load(), 1u);
  EXPECT_EQ(counters.rejected_non_finite.load(), 2u);
  EXPECT_EQ(counters.rejected_other.load(), 2u);
  EXPECT_EQ(counters.samples.load(), 1500u + 2600u);
  // Nothing was lost on the wire: the restart is owed to the rejected blocks, counted above, and
  // is not reported again as a sequence gap.
  EXPECT_EQ(counters.sequence_gaps.load(), 0u);
}

TEST(ChannelPipeline, CountsTheLongestRepeatAndTheClippedSamplesAcrossBlocks) {
  // A signal built so the answer can be counted by hand: a 50 Hz sine (no two neighbours equal at
  // 2560 Hz: sin(2 pi 50 n / 2560) repeats only every 256 samples), then a dead stretch of 300
  // samples stuck at 0.25 (a flatlined channel) straddling block boundaries, and 7 single samples
  // at +-2.0 beyond the clip level 1.5, none next to another. Expected: the longest run of
  // identical samples is 300, and 7 samples are clipped.
  PointSettings settings = Settings();
  settings.clip_level = 1.5;
  auto sink = std::make_shared<CollectingSink>();
  auto pipeline = Make(settings, sink);
  ASSERT_TRUE(pipeline);
  std::vector<double> x(kSamples);
  for (std::size_t n = 0; n < x.size(); ++n) x[n] = std::sin(2.0 * M_PI * 50.0 * static_cast<double>(n) / kRate);
  for (std::size_t n = 1000; n < 1300; ++n) x[n] = 0.25;
  for (std::size_t n : {100, 400, 1500, 2000, 2500, 3000, 4000}) x[n] = n % 200 ? 2.0 : -2.0;
  std::uint64_t sequence = 0;
  Feed(*pipeline, x, kStartNs, {97, 13, 256}, sequence);
  pipeline->Flush();
  std::size_t longest = 0, clipped = 0;
  for (const auto& record : sink->Records()) {
    longest = std::max<std::size_t>(longest, record.longest_identical_run);
    clipped += record.clipped_samples;
  }
  EXPECT_EQ(longest, 300u);
  EXPECT_EQ(clipped, 7u);
}

TEST(ChannelPipeline, VoltsAreDividedBySensitivity) {
  // "100 mV/g": the accelerometer puts out 100 mV per g, so 0.1 V is 1 g (the usual IEPE
  // datasheet convention: sensitivity = output voltage per unit of acceleration).
  auto settings = Settings();
  settings.sample_unit = estimators::Unit::kG;
  auto sensitivity = estimators::Sensitivity::Parse("100 mV/g");
  ASSERT_TRUE(sensitivity.ok()) << sensitivity.message();
  settings.sensitivity = *sensitivity;

  {
    // A constant 0.1 V for one full interval: the mean is 1 g.
    auto sink = std::make_shared<CollectingSink>();
    auto pipeline = Make(settings, sink);
    std::uint64_t sequence = 0;
    Feed(*pipeline, std::vector<double>(256 + 9 * 128, 0.1), kStartNs, {400}, sequence, true);
    const auto records = sink->Records();
    ASSERT_EQ(records.size(), 1u);
    EXPECT_NEAR(records[0].indicators.mean, 1.0, 1e-12);
    EXPECT_EQ(records[0].sample_unit, "g");
  }
  {
    // A signal in g sent as volts: the records equal the batch estimator over the signal in g.
    const auto g = TestSignal(kSamples, kRate, 12);
    std::vector<double> volts(g.size());
    for (std::size_t i = 0; i < g.size(); ++i) volts[i] = 0.1 * g[i];
    auto sink = std::make_shared<CollectingSink>();
    auto pipeline = Make(settings, sink);
    std::uint64_t sequence = 0;
    Feed(*pipeline, volts, kStartNs, {640}, sequence, true);
    pipeline->Flush();
    // Scaling by 0.1 and back costs a few ulps per sample: 1e-12 relative still holds.
    ExpectRecordsMatch(sink->Records(), ExpectedRecords({{g, kStartNs}}, settings, true));
  }
}

TEST(ChannelPipeline, SensitivityInAnotherUnitThanTheSamplesIsRefused) {
  // A "100 mV/g" sensor divided into a point declared in m/s^2 would be off by 9.80665: refuse.
  auto settings = Settings();
  settings.sample_unit = estimators::Unit::kMetresPerSecondSquared;
  settings.sensitivity = *estimators::Sensitivity::Parse("100 mV/g");
  const Status status = settings.Validate();
  EXPECT_FALSE(status.ok());
  EXPECT_NE(status.message().find("m/s^2"), std::string::npos) << status.message();
  EXPECT_FALSE(ChannelPipeline::Create(settings, nullptr).ok());
}

TEST(ChannelPipeline, BandValuesOfALineMatchTheHandbookVelocity) {
  // 1 g RMS at 100 Hz is 9.80665 / (2 pi 100) m/s = 15.608 mm/s RMS (v = a / omega; handbook
  // formula, REFERENCE_VALUES "Units and indicators"). 1 Hz bins put the line on bin 100 so the
  // window's spread over neighbouring bins (integrated at 99 and 101 Hz) costs under 1e-4.
  auto settings = Settings();
  settings.sample_unit = estimators::Unit::kG;
  settings.welch.segment_length = 2560;
  settings.welch.overlap = 1280;
  settings.welch.segments_per_average = 4;
  settings.bands = {{"velocity", 10.0, 1000.0, estimators::Unit::kMillimetresPerSecond},
                    {"acceleration", 10.0, 1000.0, estimators::Unit::kG}};
  std::vector<double> x(2560 + 3 * 1280);
  for (std::size_t i = 0; i < x.size(); ++i)
    x[i] = std::sqrt(2.0) * std::sin(6.283185307179586 * 100.0 * static_cast<double>(i) / kRate);
  auto sink = std::make_shared<CollectingSink>();
  auto pipeline = Make(settings, sink);
  std::uint64_t sequence = 0;
  Feed(*pipeline, x, kStartNs, {1111}, sequence);
  const auto records = sink->Records();
  ASSERT_EQ(records.size(), 1u);
  EXPECT_NEAR(records[0].bands[0].rms, 15.608, 15.608 * 2e-4);
  EXPECT_NEAR(records[0].bands[1].rms, 1.0, 1e-3);
  // And exactly what IntegrateBand gives on the batch spectrum of the same samples.
  ExpectRecordsMatch(records, ExpectedRecords({{x, kStartNs}}, settings, false));
}

}  // namespace
}  // namespace spinward::daemon
