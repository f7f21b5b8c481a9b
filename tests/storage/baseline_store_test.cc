// Learned baselines: the limits stored for a measure follow from a hand-computed median and MAD of
// the values stored over the learning period, sensor-fault intervals and values outside the period
// left out; provenance (period, count, when) is kept.
#include "spinward/storage/baseline_store.h"

#include <gtest/gtest.h>

#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::storage {
namespace {

using testing::kBaseNs;
using testing::kTenMinNs;
using testing::VelocityRecord;

TEST(BaselineStore, LimitsFromHandComputedMedianAndMad) {
  const auto path = (spinward::testing::FreshTempDir("baseline_store") / "trend.db").string();
  {
    auto store = TrendStore::Open(path);
    ASSERT_TRUE(store) << store.message();
    WriteBatch batch;
    batch.records.push_back(VelocityRecord(kBaseNs - kTenMinNs, 50.0));  // before the period
    // Nine intervals in the period; by hand: median 2.1, MAD 0.2, scaled 0.29652 (see
    // tests/estimators/robust_stats_test.cc, checked there against scipy).
    const double values[] = {2.0, 2.2, 1.9, 9.5, 2.1, 2.3, 2.0, 1.8, 2.4};
    for (int i = 0; i < 9; ++i) {
      batch.records.push_back(VelocityRecord(kBaseNs + i * kTenMinNs, values[i]));
    }
    batch.records.push_back(VelocityRecord(kBaseNs + 9 * kTenMinNs, 40.0, /*fault=*/true));
    batch.records.push_back(VelocityRecord(kBaseNs + 20 * kTenMinNs, 60.0));  // after the period
    WriteOutcome outcome = store->Write(batch);
    ASSERT_TRUE(outcome.status.ok()) << outcome.status.message();
  }
  auto baselines = BaselineStore::Open(path);
  ASSERT_TRUE(baselines) << baselines.message();
  const std::int64_t end = kBaseNs + 10 * kTenMinNs;
  auto marked = baselines->Start("P-101", kBaseNs, end);
  ASSERT_TRUE(marked) << marked.message();
  EXPECT_EQ(*marked, 1);  // the point's one stored measure
  EXPECT_FALSE(baselines->Start("P-999", kBaseNs, end).ok());

  // Not learned before the period has ended.
  EXPECT_EQ(*baselines->Learn("P-101", end - 1), 0);
  auto rows = baselines->Rows("P-101");
  ASSERT_TRUE(rows);
  ASSERT_EQ(rows->size(), 1u);
  EXPECT_FALSE((*rows)[0].learned_ns.has_value());

  EXPECT_EQ(*baselines->Learn("P-101", end + 5), 1);
  rows = baselines->Rows("P-101");
  ASSERT_TRUE(rows);
  const BaselineRow& row = (*rows)[0];
  EXPECT_EQ(row.measure, "velocity_rms_10_1000");
  EXPECT_EQ(row.count, 9);  // the fault interval and the values outside the period left out
  EXPECT_NEAR(*row.median, 2.1, 1e-12);
  EXPECT_NEAR(*row.mad, 0.29652, 1e-12);
  // alert = 2.1 + 3 x 0.29652, danger = 2.1 + 6 x 0.29652 (by hand).
  EXPECT_NEAR(*row.alert, 2.98956, 1e-12);
  EXPECT_NEAR(*row.danger, 3.87912, 1e-12);
  EXPECT_EQ(row.start_ns, kBaseNs);
  EXPECT_EQ(row.end_ns, end);
  EXPECT_EQ(*row.learned_ns, end + 5);
}

}  // namespace
}  // namespace spinward::storage
