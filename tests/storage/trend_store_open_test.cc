// Opening, refusing and migrating databases. PRAGMA semantics as the SQLite documentation
// (sqlite.org/pragma.html) states them: user_version is a free integer in the file header that
// applications use for schema versions; journal_mode=WAL is persistent, so another connection
// sees "wal"; quick_check reports "ok" for a sound file.
#include <gtest/gtest.h>

#include <filesystem>

#include "spinward/storage/trend_store.h"
#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::storage {
namespace {

using testing::RawConnection;
using testing::ReadBytes;

std::filesystem::path CopyFixture(const std::string& name, const std::string& test) {
  auto dir = spinward::testing::FreshTempDir(test);
  auto target = dir / name;
  std::filesystem::copy_file(spinward::testing::TestDataDir() / "storage" / name, target);
  return target;
}

TEST(TrendStoreOpen, EmptyPathCreatesCurrentSchemaInWalMode) {
  auto path = spinward::testing::FreshTempDir("open-new") / "larkfield.db";
  {
    auto store = TrendStore::Open(path.string());
    ASSERT_TRUE(store.ok()) << store.message();
    auto version = store->SchemaVersion();
    ASSERT_TRUE(version.ok());
    EXPECT_EQ(*version, kSchemaVersion);
  }
  RawConnection raw(path);
  EXPECT_EQ(raw.Text("PRAGMA journal_mode"), "wal");  // persistent, per the SQLite docs
  EXPECT_EQ(raw.Int("PRAGMA user_version"), kSchemaVersion);
  EXPECT_EQ(raw.Text("PRAGMA quick_check"), "ok");
  // Every table the docs list exists.
  for (const char* table :
       {"points", "measures", "trend_values", "rollup_hourly", "rollup_daily", "spectra",
        "alarm_events", "alarm_state", "acknowledgements", "outbox"}) {
    EXPECT_EQ(raw.Int(std::string(
                          "SELECT count(*) FROM sqlite_schema WHERE type = 'table' AND name = '") +
                      table + "'"),
              1)
        << table;
  }
}

TEST(TrendStoreOpen, ZeroByteFileIsTreatedAsNew) {
  // SQLite treats an empty file as an empty database (sqlite.org/fileformat2.html, "the database
  // file ... may be zero bytes"); nothing is lost by migrating it.
  auto path = spinward::testing::FreshTempDir("open-empty") / "empty.db";
  { std::ofstream touch(path); }
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok()) << store.message();
  EXPECT_EQ(*store->SchemaVersion(), kSchemaVersion);
}

TEST(TrendStoreOpen, MigratesVersion1AndBackfillsRollups) {
  auto path = spinward::testing::FreshTempDir("open-v1") / "v1.db";
  {
    RawConnection raw(path);
    std::string sql =
        ReadBytes(spinward::testing::TestDataDir() / "storage" / "schema_v1_larkfield.sql");
    ASSERT_EQ(raw.Exec(sql), SQLITE_OK);
    ASSERT_EQ(raw.Int("PRAGMA user_version"), 1);
  }
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok()) << store.message();
  EXPECT_EQ(*store->SchemaVersion(), kSchemaVersion);  // migrated through every later step

  // The raw values survive.
  TrendQuery query{"P-101", "velocity_rms_10_1000"};
  auto raw_rows = store->Trend(query);
  ASSERT_TRUE(raw_rows.ok()) << raw_rows.message();
  ASSERT_EQ(raw_rows->size(), 9u);
  EXPECT_EQ(raw_rows->at(3).fault_count, 1);

  // Back-filled hourly roll-ups, fault interval excluded. Expected values from Python's
  // statistics module: hour 10 of [2.31, 2.45, 2.38, 2.52, 2.41] -> min 2.31, fmean 2.414,
  // max 2.52, n 5; hour 11 of [2.60, 2.71, 2.66] -> 2.6, 2.6566666666666667, 2.71, n 3.
  query.level = TrendLevel::kHourly;
  auto hourly = store->Trend(query);
  ASSERT_TRUE(hourly.ok()) << hourly.message();
  ASSERT_EQ(hourly->size(), 2u);
  EXPECT_EQ(hourly->at(0).start_ns, testing::kBaseNs);
  EXPECT_DOUBLE_EQ(hourly->at(0).min, 2.31);
  EXPECT_NEAR(hourly->at(0).value, 2.414, 1e-12);
  EXPECT_DOUBLE_EQ(hourly->at(0).max, 2.52);
  EXPECT_EQ(hourly->at(0).count, 5);
  EXPECT_EQ(hourly->at(0).fault_count, 1);
  EXPECT_NEAR(hourly->at(1).value, 2.6566666666666667, 1e-12);
  EXPECT_EQ(hourly->at(1).count, 3);

  // The alarm state carried over, with the acknowledgement columns added empty.
  auto states = store->LoadAlarmStates();
  ASSERT_TRUE(states.ok()) << states.message();
  ASSERT_EQ(states->size(), 1u);
  EXPECT_EQ(states->at(0).state, "alert");
  EXPECT_TRUE(states->at(0).latched);
  EXPECT_EQ(states->at(0).ack_by, "");
}

TEST(TrendStoreOpen, ReopeningAMigratedFileChangesNothing) {
  auto path = spinward::testing::FreshTempDir("open-twice") / "twice.db";
  { ASSERT_TRUE(TrendStore::Open(path.string()).ok()); }
  auto store = TrendStore::Open(path.string());
  ASSERT_TRUE(store.ok()) << store.message();
  EXPECT_EQ(*store->SchemaVersion(), kSchemaVersion);
}

void ExpectRefusedAndUnchanged(const std::filesystem::path& path, const std::string& reason) {
  std::string before = ReadBytes(path);
  ASSERT_FALSE(before.empty());
  auto store = TrendStore::Open(path.string());
  ASSERT_FALSE(store.ok());
  EXPECT_NE(store.message().find(path.string()), std::string::npos) << store.message();
  EXPECT_NE(store.message().find(reason), std::string::npos) << store.message();
  EXPECT_EQ(ReadBytes(path), before) << "the refused file was modified";
  EXPECT_FALSE(std::filesystem::exists(path.string() + "-wal"));
}

TEST(TrendStoreOpen, RefusesNewerSchemaAndLeavesFileUnchanged) {
  // newer_version.db was made by tests/data/storage/make_fixtures.py with user_version 99.
  ExpectRefusedAndUnchanged(CopyFixture("newer_version.db", "newer"), "schema version 99 is newer");
}

TEST(TrendStoreOpen, RefusesFileThatIsNoDatabase) {
  ExpectRefusedAndUnchanged(CopyFixture("not_a_database.db", "garbage"), "not a SQLite database");
}

TEST(TrendStoreOpen, RefusesDamagedDatabase) {
  // damaged.db: Python's sqlite3 itself reports "database disk image is malformed" for it.
  ExpectRefusedAndUnchanged(CopyFixture("damaged.db", "damaged"), "damaged");
}

TEST(TrendStoreOpen, ReadOnlyRefusesMissingFile) {
  auto path = spinward::testing::FreshTempDir("ro-missing") / "absent.db";
  auto store = TrendStore::OpenReadOnly(path.string());
  ASSERT_FALSE(store.ok());
  EXPECT_NE(store.message().find("does not exist"), std::string::npos) << store.message();
  EXPECT_FALSE(std::filesystem::exists(path));
}

TEST(TrendStoreOpen, RejectsBadOptionsNamingTheField) {
  StoreOptions options;
  options.retention.raw_days = -1;
  auto store =
      TrendStore::Open((spinward::testing::FreshTempDir("bad-opt") / "x.db").string(), options);
  ASSERT_FALSE(store.ok());
  EXPECT_NE(store.message().find("raw_days -1"), std::string::npos) << store.message();
}

}  // namespace
}  // namespace spinward::storage
