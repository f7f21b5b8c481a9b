// Pruning sent outbox rows (TrendStore::PruneSentOutbox, docs/messaging.md): rows the broker
// acknowledged longer ago than the retention go, a bounded batch per call, oldest first; rows not
// yet sent stay however old, young sent rows stay, and so does the newest row, because SQLite gives
// a new row "a ROWID that is one larger than the largest ROWID in the table prior to the insert"
// (sqlite.org/autoinc.html, for a table without AUTOINCREMENT, as the outbox is): deleting the
// newest row would let the next alarm reuse its seq, which the command hook counts on.
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::storage {
namespace {

using testing::kBaseNs;
using testing::kTenMinNs;
using testing::VelocityRecord;

constexpr std::int64_t kHourNs = 3600LL * 1000000000LL;

WriteBatch AlarmAt(const std::string& event_id, std::int64_t t) {
  WriteBatch batch{{VelocityRecord(t, 2.9)}, {}, {}};
  AlarmEventRecord event;
  event.event_id = event_id;
  event.time_ns = t;
  event.point_id = "P-101";
  event.measure = "velocity_rms_10_1000";
  event.from_state = "normal";
  event.to_state = "alert";
  event.value = 2.9;
  batch.events.push_back(event);
  return batch;
}

std::vector<std::string> OutboxIds(TrendStore& store) {
  std::vector<std::string> ids;
  auto rows = store.OutboxAfter(0, false, 1000);
  if (!rows.ok()) return {"(query failed: " + rows.message() + ")"};
  for (const auto& e : rows.value()) ids.push_back(e.event_id);
  return ids;
}

TEST(OutboxPruning, OnlySentRowsPastTheRetentionGoABatchAtATime) {
  const auto path = spinward::testing::FreshTempDir("outbox-prune") / "larkfield.db";
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok()) << store.message();
  const std::vector<std::string> ids{"lf-1", "lf-2", "lf-3", "lf-4", "lf-5", "lf-6"};
  for (std::size_t i = 0; i < ids.size(); ++i) {
    ASSERT_TRUE(store->Write(AlarmAt(ids[i], kBaseNs + static_cast<std::int64_t>(i) * kTenMinNs))
                    .status.ok());
  }
  // "Now" is 100 h after the alarms; the retention is 72 h (the default of
  // messaging.sent_retention_h; a few days is common practice, no source).
  const std::int64_t now = kBaseNs + 100 * kHourNs;
  const std::int64_t cutoff = now - 72 * kHourNs;
  ASSERT_TRUE(store->MarkOutboxSent("lf-1", kBaseNs + kHourNs).ok());  // sent 99 h ago
  ASSERT_TRUE(store->MarkOutboxSent("lf-2", kBaseNs + kHourNs).ok());  // sent 99 h ago
  // lf-3: never acknowledged (the broker was away): stays however old.
  ASSERT_TRUE(store->MarkOutboxSent("lf-4", now - kHourNs).ok());          // sent 1 h ago
  ASSERT_TRUE(store->MarkOutboxSent("lf-5", cutoff - 1).ok());             // just past it
  ASSERT_TRUE(store->MarkOutboxSent("lf-6", kBaseNs + 2 * kHourNs).ok());  // old, but newest
  const std::int64_t newest_seq = *store->LastOutboxSeq();

  auto pruned = store->PruneSentOutbox(cutoff, 2);
  ASSERT_TRUE(pruned.ok()) << pruned.message();
  EXPECT_EQ(*pruned, 2);  // the bound, oldest first
  EXPECT_EQ(OutboxIds(*store), (std::vector<std::string>{"lf-3", "lf-4", "lf-5", "lf-6"}));
  pruned = store->PruneSentOutbox(cutoff, 2);
  ASSERT_TRUE(pruned.ok()) << pruned.message();
  EXPECT_EQ(*pruned, 1);
  EXPECT_EQ(OutboxIds(*store), (std::vector<std::string>{"lf-3", "lf-4", "lf-6"}));
  pruned = store->PruneSentOutbox(cutoff, 2);
  ASSERT_TRUE(pruned.ok()) << pruned.message();
  EXPECT_EQ(*pruned, 0);

  // The unsent row is still pending, and the alarm history itself is untouched.
  auto pending = store->OutboxAfter(0, true, 10);
  ASSERT_TRUE(pending.ok());
  ASSERT_EQ(pending->size(), 1u);
  EXPECT_EQ(pending->front().event_id, "lf-3");
  auto alarms = store->Alarms(0, false);
  ASSERT_TRUE(alarms.ok()) << alarms.message();
  EXPECT_EQ(alarms->size(), 6u);

  // The next alarm gets a seq above every one handed out before.
  ASSERT_TRUE(store->Write(AlarmAt("lf-7", kBaseNs + 6 * kTenMinNs)).status.ok());
  auto after = store->OutboxAfter(newest_seq, false, 10);
  ASSERT_TRUE(after.ok());
  ASSERT_EQ(after->size(), 1u);
  EXPECT_EQ(after->front().event_id, "lf-7");
}

}  // namespace
}  // namespace spinward::storage
