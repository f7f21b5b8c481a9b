// The writer thread: batching, commit reports, and the behaviour under a full disk (simulated with
// PRAGMA max_page_count: "Query or set the maximum number of pages in the database file", and an
// insert past it fails with SQLITE_FULL, per sqlite.org/pragma.html and sqlite.org/rescode.html)
// and a locked database (another connection's BEGIN EXCLUSIVE holds the write lock; the writer's
// BEGIN IMMEDIATE then fails with SQLITE_BUSY after busy_timeout, per
// sqlite.org/lang_transaction.html). Waits below are guards with generous deadlines, not timings:
// no check depends on speed.
#include "spinward/storage/trend_writer.h"

#include <gtest/gtest.h>

#include <mutex>
#include <set>
#include <thread>

#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::storage {
namespace {

using namespace std::chrono_literals;
using testing::kBaseNs;
using testing::kTenMinNs;
using testing::RawConnection;
using testing::VelocityRecord;

// Polls until `done` holds or 60 s pass (a guard against hanging, not a speed check).
template <typename Predicate>
bool WaitFor(Predicate done) {
  auto deadline = std::chrono::steady_clock::now() + 60s;
  while (!done()) {
    if (std::chrono::steady_clock::now() > deadline) return false;
    std::this_thread::sleep_for(2ms);
  }
  return true;
}

struct Log {
  std::mutex mutex;
  std::vector<std::string> lines;
  LogCallback Callback() {
    return [this](LogLevel, const std::string& line) {
      std::lock_guard lock(mutex);
      lines.push_back(line);
    };
  }
  bool Contains(const std::string& text) {
    std::lock_guard lock(mutex);
    for (const auto& line : lines) {
      if (line.find(text) != std::string::npos) return true;
    }
    return false;
  }
};

WriterOptions FastRetry() {
  WriterOptions options;
  options.max_batch_items = 10;
  options.max_batch_delay = 5ms;
  options.retry_initial = 5ms;
  options.retry_max = 20ms;
  options.prune_every = 0ms;
  return options;
}

std::filesystem::path NewDb(const std::string& name) {
  return spinward::testing::FreshTempDir(name) / "larkfield.db";
}

TEST(TrendWriter, CommitsEverythingInBatchesAndReportsIt) {
  auto path = NewDb("writer-all");
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok()) << store.message();
  std::mutex mutex;
  std::set<std::int64_t> reported;
  auto writer = TrendWriter::Start(std::move(*store), FastRetry(), {},
                                   [&](const std::vector<CommittedInterval>& committed) {
                                     std::lock_guard lock(mutex);
                                     for (const auto& c : committed)
                                       reported.insert(c.interval_start_ns);
                                   });
  ASSERT_TRUE(writer.ok()) << writer.message();
  for (int i = 0; i < 95; ++i) {
    EXPECT_TRUE(
        (*writer)->Submit({{VelocityRecord(kBaseNs + i * kTenMinNs, 2.0 + 0.01 * i)}, {}, {}}));
  }
  ASSERT_TRUE((*writer)->Flush(60s));
  auto counters = (*writer)->counters();
  EXPECT_EQ(counters.committed_records, 95u);
  EXPECT_EQ(counters.committed_intervals, 95u);
  EXPECT_GE(counters.committed_batches, 10u);  // at most 10 items per transaction
  EXPECT_EQ(counters.dropped_records, 0u);
  EXPECT_EQ(counters.backlog_items, 0u);
  {
    std::lock_guard lock(mutex);
    EXPECT_EQ(reported.size(), 95u);
  }
  // A reader on its own connection sees them while the writer still holds its connection.
  auto reader = TrendStore::OpenReadOnly(path.string());
  ASSERT_TRUE(reader.ok()) << reader.message();
  auto rows = reader->Trend({"P-101", "velocity_rms_10_1000"});
  ASSERT_TRUE(rows.ok()) << rows.message();
  EXPECT_EQ(rows->size(), 95u);
}

TEST(TrendWriter, EventsAndRecordsOfOneSubmitAreCommittedTogether) {
  auto path = NewDb("writer-event");
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok());
  auto writer = TrendWriter::Start(std::move(*store), FastRetry());
  ASSERT_TRUE(writer.ok());
  WriteBatch batch{{VelocityRecord(kBaseNs, 2.9)}, {}, {}};
  AlarmEventRecord event;
  event.event_id = "lf-7";
  event.time_ns = kBaseNs;
  event.point_id = "P-101";
  event.measure = "velocity_rms_10_1000";
  event.from_state = "normal";
  event.to_state = "alert";
  event.value = 2.9;
  batch.events.push_back(event);
  ASSERT_TRUE((*writer)->Submit(batch));
  ASSERT_TRUE((*writer)->Flush(60s));
  EXPECT_EQ((*writer)->counters().committed_events, 1u);
  RawConnection raw(path);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM outbox WHERE event_id = 'lf-7'"), 1);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM trend_values"), 1);
}

TEST(TrendWriter, AlarmEventsAreCommittedWithoutWaitingForTheBatchDelay) {
  // Records wait up to max_batch_delay to share a commit; an alarm event (and its outbox row) must
  // not, or every alarm reaches the plant's messaging that much later. With a one-hour delay, a
  // batch of records alone is still queued when one with an event has been committed.
  auto path = NewDb("writer-urgent");
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok());
  WriterOptions options = FastRetry();
  options.max_batch_delay = std::chrono::hours(1);
  options.max_batch_items = 100000;
  auto writer = TrendWriter::Start(std::move(*store), options);
  ASSERT_TRUE(writer.ok());
  ASSERT_TRUE((*writer)->Submit(WriteBatch{{VelocityRecord(kBaseNs, 2.0)}, {}, {}}));
  std::this_thread::sleep_for(200ms);
  EXPECT_EQ((*writer)->counters().committed_records, 0u);  // waiting for company, as designed

  WriteBatch batch{{VelocityRecord(kBaseNs + kTenMinNs, 2.9)}, {}, {}};
  AlarmEventRecord event;
  event.event_id = "lf-8";
  event.time_ns = kBaseNs + kTenMinNs;
  event.point_id = "P-101";
  event.measure = "velocity_rms_10_1000";
  event.from_state = "normal";
  event.to_state = "alert";
  event.value = 2.9;
  batch.events.push_back(event);
  ASSERT_TRUE((*writer)->Submit(batch));
  // Generous for a loaded machine, and far below the hour the batch delay would take.
  const auto deadline = std::chrono::steady_clock::now() + 60s;
  while ((*writer)->counters().committed_events < 1 && std::chrono::steady_clock::now() < deadline)
    std::this_thread::sleep_for(10ms);
  EXPECT_EQ((*writer)->counters().committed_events, 1u);
  EXPECT_EQ((*writer)->counters().committed_records, 2u);      // the waiting record went along
  EXPECT_GT((*writer)->counters().commit_seconds_total, 0.0);  // the commit's time is counted
  RawConnection raw(path);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM outbox WHERE event_id = 'lf-8'"), 1);
}

TEST(TrendWriter, DiskFullKeepsBacklogAndWritesItOnceSpaceReturns) {
  auto path = NewDb("writer-full");
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok());
  Log log;
  auto writer = TrendWriter::Start(std::move(*store), FastRetry(), log.Callback());
  ASSERT_TRUE(writer.ok());
  // Cap the file at its present size (the cap cannot go below it, per the SQLite docs).
  (*writer)->Post([](TrendStore& s) { ASSERT_TRUE(s.SetMaxPageCount(1).ok()); });
  ASSERT_TRUE((*writer)->Flush(60s));
  for (int i = 0; i < 40; ++i) {
    auto record = VelocityRecord(kBaseNs + i * kTenMinNs, 2.5);
    record.spectrum.sample_rate_hz = 25600.0;
    record.spectrum.fft_length = 8192;
    record.spectrum.segment_length = 8192;
    record.spectrum.values.assign(4097, 1e-6);
    (*writer)->Submit({{record}, {}, {}});
  }
  ASSERT_TRUE(WaitFor([&] { return (*writer)->counters().failed_attempts >= 3; }));
  auto during = (*writer)->counters();
  EXPECT_EQ(during.committed_records, 0u);
  EXPECT_EQ(during.backlog_items, 40u);
  EXPECT_EQ(during.dropped_records, 0u);
  EXPECT_TRUE(log.Contains("full")) << "no log line about the full database";
  EXPECT_TRUE(during.failing);  // health readiness: storage not writable

  (*writer)->Post([](TrendStore& s) { ASSERT_TRUE(s.SetMaxPageCount(1 << 30).ok()); });
  ASSERT_TRUE((*writer)->Flush(60s));
  auto after = (*writer)->counters();
  EXPECT_EQ(after.committed_records, 40u);
  EXPECT_EQ(after.backlog_items, 0u);
  EXPECT_EQ(after.dropped_records, 0u);
  EXPECT_TRUE(log.Contains("writing again"));
  EXPECT_FALSE(after.failing);
  RawConnection raw(path);
  EXPECT_EQ(raw.Int("SELECT count(*) FROM trend_values"), 40);
  EXPECT_EQ(raw.Text("PRAGMA quick_check"), "ok");
}

TEST(TrendWriter, LockedDatabaseKeepsBacklogAndWritesItWhenReleased) {
  auto path = NewDb("writer-locked");
  StoreOptions store_options;
  store_options.busy_timeout_ms = 10;
  auto store = TrendStore::Open(path.string(), store_options);
  ASSERT_TRUE(store.ok());
  RawConnection other(path);
  ASSERT_EQ(other.Exec("BEGIN EXCLUSIVE"), SQLITE_OK);
  Log log;
  auto writer = TrendWriter::Start(std::move(*store), FastRetry(), log.Callback());
  ASSERT_TRUE(writer.ok());
  for (int i = 0; i < 25; ++i)
    (*writer)->Submit({{VelocityRecord(kBaseNs + i * kTenMinNs, 2.5)}, {}, {}});
  ASSERT_TRUE(WaitFor([&] { return (*writer)->counters().failed_attempts >= 2; }));
  EXPECT_EQ((*writer)->counters().committed_records, 0u);
  EXPECT_EQ((*writer)->counters().backlog_items, 25u);
  EXPECT_TRUE(log.Contains("locked")) << "no log line about the locked database";

  ASSERT_EQ(other.Exec("COMMIT"), SQLITE_OK);
  ASSERT_TRUE((*writer)->Flush(60s));
  EXPECT_EQ((*writer)->counters().committed_records, 25u);
  EXPECT_EQ((*writer)->counters().dropped_records, 0u);
  EXPECT_EQ(other.Int("SELECT count(*) FROM trend_values"), 25);
}

TEST(TrendWriter, BacklogBeyondItsBoundIsDroppedCountedAndLogged) {
  auto path = NewDb("writer-drop");
  StoreOptions store_options;
  store_options.busy_timeout_ms = 10;
  auto store = TrendStore::Open(path.string(), store_options);
  ASSERT_TRUE(store.ok());
  RawConnection other(path);
  ASSERT_EQ(other.Exec("BEGIN EXCLUSIVE"), SQLITE_OK);
  WriterOptions options = FastRetry();
  options.max_batch_items = 5;
  options.max_backlog_items = 10;
  Log log;
  auto writer = TrendWriter::Start(std::move(*store), options, log.Callback());
  ASSERT_TRUE(writer.ok());
  int refused = 0;
  for (int i = 0; i < 25; ++i) {
    if (!(*writer)->Submit({{VelocityRecord(kBaseNs + i * kTenMinNs, 2.5)}, {}, {}})) ++refused;
  }
  EXPECT_GT(refused, 0);
  ASSERT_TRUE(WaitFor([&] { return (*writer)->counters().failed_attempts >= 2; }));
  auto held = (*writer)->counters();
  EXPECT_LE(held.backlog_items, 10u);
  EXPECT_GE(held.dropped_records, 15u);
  EXPECT_TRUE(log.Contains("dropped")) << "no log line about dropped records";

  ASSERT_EQ(other.Exec("COMMIT"), SQLITE_OK);
  ASSERT_TRUE((*writer)->Flush(60s));
  auto after = (*writer)->counters();
  // Nothing vanishes unaccounted: every record is either committed or counted as dropped.
  EXPECT_EQ(after.committed_records + after.dropped_records, 25u);
  EXPECT_EQ(static_cast<std::uint64_t>(other.Int("SELECT count(*) FROM trend_values")),
            after.committed_records);
  // The newest records are the ones kept (the oldest are dropped first).
  EXPECT_EQ(other.Int("SELECT max(start_ns) FROM trend_values"), kBaseNs + 24 * kTenMinNs);
}

TEST(TrendWriter, PermanentFailureDropsThatBatchOnly) {
  auto path = NewDb("writer-permanent");
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok());
  {
    RawConnection raw(path);
    ASSERT_EQ(
        raw.Exec("INSERT INTO outbox (event_id, payload, created_ns) VALUES ('lf-dup', '{}', 0)"),
        SQLITE_OK);
  }
  Log log;
  WriterOptions options = FastRetry();
  options.max_batch_items = 1;  // one item per transaction, so the bad one fails alone
  auto writer = TrendWriter::Start(std::move(*store), options, log.Callback());
  ASSERT_TRUE(writer.ok());
  AlarmEventRecord dup;
  dup.event_id = "lf-dup";
  dup.point_id = "P-101";
  dup.measure = "velocity_rms_10_1000";
  dup.from_state = "normal";
  dup.to_state = "alert";
  (*writer)->Submit({{}, {dup}, {}});
  (*writer)->Submit({{VelocityRecord(kBaseNs, 2.5)}, {}, {}});
  ASSERT_TRUE((*writer)->Flush(60s));
  auto counters = (*writer)->counters();
  EXPECT_EQ(counters.dropped_events, 1u);
  EXPECT_EQ(counters.committed_records, 1u);
  EXPECT_EQ(counters.failed_attempts, 0u);  // not retried: retrying cannot fix it
  EXPECT_TRUE(log.Contains("UNIQUE")) << "the constraint failure was not logged";
}

TEST(TrendWriter, RejectsBadOptions) {
  auto store = TrendStore::Open(NewDb("writer-options").string());
  ASSERT_TRUE(store.ok());
  WriterOptions options;
  options.max_batch_items = 100;
  options.max_backlog_items = 10;
  auto writer = TrendWriter::Start(std::move(*store), options);
  ASSERT_FALSE(writer.ok());
  EXPECT_NE(writer.message().find("max_backlog_items 10"), std::string::npos) << writer.message();
}

TEST(TrendWriter, TellsMessagingAfterACommitThatStoredNewAlarmEvents) {
  // The MQTT publisher is woken by this call (docs/messaging.md): it must come after a commit that
  // put an event, and so its outbox row, in the database (docs/storage.md: both in one
  // transaction), and not for records alone or for an event stored before (a no-op insert).
  auto path = NewDb("writer-tells");
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok());
  std::mutex mutex;
  int told = 0;
  std::int64_t outbox_rows_when_told = -1;
  WriterOptions options = FastRetry();
  options.on_events_committed = [&] {
    RawConnection raw(path);  // what another connection (the publisher's) sees at that moment
    std::lock_guard lock(mutex);
    ++told;
    outbox_rows_when_told = raw.Int("SELECT count(*) FROM outbox");
  };
  auto writer = TrendWriter::Start(std::move(*store), options);
  ASSERT_TRUE(writer.ok());
  auto told_now = [&] {
    std::lock_guard lock(mutex);
    return told;
  };

  ASSERT_TRUE((*writer)->Submit(WriteBatch{{VelocityRecord(kBaseNs, 2.0)}, {}, {}}));
  ASSERT_TRUE((*writer)->Flush(60s));
  EXPECT_EQ(told_now(), 0);

  WriteBatch batch{{VelocityRecord(kBaseNs + kTenMinNs, 2.9)}, {}, {}};
  AlarmEventRecord event;
  event.event_id = "lf-9";
  event.time_ns = kBaseNs + kTenMinNs;
  event.point_id = "P-101";
  event.measure = "velocity_rms_10_1000";
  event.from_state = "normal";
  event.to_state = "alert";
  event.value = 2.9;
  batch.events.push_back(event);
  ASSERT_TRUE((*writer)->Submit(batch));
  ASSERT_TRUE((*writer)->Flush(60s));
  EXPECT_EQ(told_now(), 1);
  {
    std::lock_guard lock(mutex);
    EXPECT_EQ(outbox_rows_when_told, 1);  // committed, visible to other connections
  }

  // The same event again (a retried submit) stores nothing new: nobody is told.
  batch.records = {VelocityRecord(kBaseNs + 2 * kTenMinNs, 2.9)};
  ASSERT_TRUE((*writer)->Submit(batch));
  ASSERT_TRUE((*writer)->Flush(60s));
  EXPECT_EQ(told_now(), 1);
  EXPECT_EQ((*writer)->counters().committed_records, 3u);
}

}  // namespace
}  // namespace spinward::storage
