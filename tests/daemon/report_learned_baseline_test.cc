// The report ranks a measure against its learned baseline when `spinward baseline` has learned one
// (the median of the learning period, with its provenance), and against the fallback (first day of
// data) otherwise; reference spectra always come from the fallback.
#include "../../daemon/src/report_learned_baseline.h"  // private to daemon/

#include <gtest/gtest.h>

#include "spinward/storage/baseline_store.h"
#include "spinward/storage/report_reader.h"
#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

using storage::testing::kBaseNs;
using storage::testing::kTenMinNs;
using storage::testing::VelocityRecord;

// A fallback that says who answered, so the test sees which provider was asked.
class MarkedFallback final : public BaselineProvider {
 public:
  int level_calls = 0;
  int spectrum_calls = 0;
  Result<std::optional<BaselineLevel>> Level(storage::ReportReader&, const storage::ReportMeasure&,
                                             std::int64_t) override {
    ++level_calls;
    return std::optional<BaselineLevel>(BaselineLevel{7.0, 0, 1, "fallback"});
  }
  Result<std::optional<storage::StoredSpectrum>> Spectrum(storage::ReportReader&,
                                                          const std::string&) override {
    ++spectrum_calls;
    return std::optional<storage::StoredSpectrum>();
  }
};

TEST(ReportLearnedBaseline, LearnedMedianWithProvenanceElseFallback) {
  const auto path =
      (spinward::testing::FreshTempDir("report_learned_baseline") / "trend.db").string();
  {
    auto store = storage::TrendStore::Open(path);
    ASSERT_TRUE(store) << store.message();
    storage::WriteBatch batch;
    // Nine intervals; by hand: median 2.1 (the same values as baseline_store_test.cc).
    const double values[] = {2.0, 2.2, 1.9, 9.5, 2.1, 2.3, 2.0, 1.8, 2.4};
    for (int i = 0; i < 9; ++i) {
      batch.records.push_back(VelocityRecord(kBaseNs + i * kTenMinNs, values[i]));
    }
    ASSERT_TRUE(store->Write(batch).status.ok());
  }
  const std::int64_t end = kBaseNs + 10 * kTenMinNs;
  {
    auto baselines = storage::BaselineStore::Open(path);
    ASSERT_TRUE(baselines) << baselines.message();
    ASSERT_TRUE(baselines->Start("P-101", kBaseNs, end));
  }
  auto reader = storage::ReportReader::Open(path);
  ASSERT_TRUE(reader) << reader.message();
  // Still learning: nothing for the report yet.
  auto learning = reader->LearnedBaselines();
  ASSERT_TRUE(learning) << learning.message();
  EXPECT_TRUE(learning->empty());

  {
    auto baselines = storage::BaselineStore::Open(path);
    ASSERT_TRUE(baselines);
    ASSERT_EQ(*baselines->Learn("P-101", end + 5), 1);
  }
  auto learned = reader->LearnedBaselines();
  ASSERT_TRUE(learned) << learned.message();
  ASSERT_EQ(learned->size(), 1u);
  EXPECT_NEAR(*(*learned)[0].median, 2.1, 1e-12);

  MarkedFallback fallback;
  LearnedBaselineProvider baseline(*learned, fallback);
  auto measures = reader->Measures();
  ASSERT_TRUE(measures);
  ASSERT_EQ(measures->size(), 1u);
  const storage::ReportMeasure& velocity = (*measures)[0];

  auto level = baseline.Level(*reader, velocity, end + kTenMinNs);
  ASSERT_TRUE(level) << level.message();
  ASSERT_TRUE(level->has_value());
  EXPECT_NEAR((*level)->value, 2.1, 1e-12);
  EXPECT_EQ((*level)->from_ns, kBaseNs);
  EXPECT_EQ((*level)->to_ns, end);
  EXPECT_NE((*level)->source.find("learned median of 9 intervals"), std::string::npos)
      << (*level)->source;
  EXPECT_EQ(fallback.level_calls, 0);

  // A report of a period before the learning started cannot use it.
  auto earlier = baseline.Level(*reader, velocity, kBaseNs);
  ASSERT_TRUE(earlier && earlier->has_value());
  EXPECT_EQ((*earlier)->source, "fallback");

  // Another measure of the point has no learned baseline.
  storage::ReportMeasure other = velocity;
  other.name = "bearing_band";
  auto other_level = baseline.Level(*reader, other, end + kTenMinNs);
  ASSERT_TRUE(other_level && other_level->has_value());
  EXPECT_EQ((*other_level)->source, "fallback");
  EXPECT_EQ(fallback.level_calls, 2);

  ASSERT_TRUE(baseline.Spectrum(*reader, "P-101"));
  EXPECT_EQ(fallback.spectrum_calls, 1);
}

}  // namespace
}  // namespace spinward::daemon
