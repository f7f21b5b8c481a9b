#include "schema.h"

#include <string>

#include "spinward/storage/trend_store.h"

namespace spinward::storage::internal {
namespace {

// Version 1: points, measures, raw trend values, alarm events and alarm states.
constexpr const char* kToVersion1 = R"sql(
CREATE TABLE points (
  point_pk    INTEGER PRIMARY KEY,
  point_id    TEXT NOT NULL UNIQUE,
  created_ns  INTEGER NOT NULL
);
CREATE TABLE measures (
  measure_pk  INTEGER PRIMARY KEY,
  point_pk    INTEGER NOT NULL REFERENCES points(point_pk),
  name        TEXT NOT NULL,
  kind        TEXT NOT NULL CHECK (kind IN ('band', 'indicator')),
  unit        TEXT NOT NULL,
  lo_hz       REAL,
  hi_hz       REAL,
  UNIQUE (point_pk, name)
);
CREATE TABLE trend_values (
  measure_pk  INTEGER NOT NULL REFERENCES measures(measure_pk),
  start_ns    INTEGER NOT NULL,
  end_ns      INTEGER NOT NULL,
  value       REAL NOT NULL,
  flags       INTEGER NOT NULL DEFAULT 0
);
CREATE UNIQUE INDEX trend_values_by_measure_time ON trend_values (measure_pk, start_ns);
CREATE TABLE alarm_events (
  event_pk    INTEGER PRIMARY KEY,
  event_id    TEXT NOT NULL UNIQUE,
  time_ns     INTEGER NOT NULL,
  point_pk    INTEGER NOT NULL REFERENCES points(point_pk),
  measure     TEXT NOT NULL,
  from_state  TEXT NOT NULL,
  to_state    TEXT NOT NULL,
  value       REAL,
  limit_value REAL,
  message     TEXT NOT NULL
);
CREATE INDEX alarm_events_by_time ON alarm_events (time_ns);
CREATE TABLE alarm_state (
  point_pk      INTEGER NOT NULL REFERENCES points(point_pk),
  measure       TEXT NOT NULL,
  state         TEXT NOT NULL,
  since_ns      INTEGER NOT NULL,
  latched       INTEGER NOT NULL DEFAULT 0,
  last_value    REAL,
  last_event_id TEXT,
  updated_ns    INTEGER NOT NULL,
  PRIMARY KEY (point_pk, measure)
);
)sql";

// Version 2: roll-ups (back-filled from the raw values already stored), spectrum snapshots,
// acknowledgements, the outbox, and acknowledgement columns on alarm_state.
constexpr const char* kToVersion2 = R"sql(
CREATE TABLE rollup_hourly (
  measure_pk  INTEGER NOT NULL REFERENCES measures(measure_pk),
  bucket_ns   INTEGER NOT NULL,
  min         REAL,
  max         REAL,
  sum         REAL NOT NULL DEFAULT 0,
  count       INTEGER NOT NULL DEFAULT 0,
  fault_count INTEGER NOT NULL DEFAULT 0
);
CREATE UNIQUE INDEX rollup_hourly_by_measure_time ON rollup_hourly (measure_pk, bucket_ns);
CREATE TABLE rollup_daily (
  measure_pk  INTEGER NOT NULL REFERENCES measures(measure_pk),
  bucket_ns   INTEGER NOT NULL,
  min         REAL,
  max         REAL,
  sum         REAL NOT NULL DEFAULT 0,
  count       INTEGER NOT NULL DEFAULT 0,
  fault_count INTEGER NOT NULL DEFAULT 0
);
CREATE UNIQUE INDEX rollup_daily_by_measure_time ON rollup_daily (measure_pk, bucket_ns);
INSERT INTO rollup_hourly (measure_pk, bucket_ns, min, max, sum, count, fault_count)
  SELECT measure_pk, start_ns - (start_ns % 3600000000000),
         MIN(CASE WHEN flags & 1 = 0 THEN value END), MAX(CASE WHEN flags & 1 = 0 THEN value END),
         TOTAL(CASE WHEN flags & 1 = 0 THEN value END), SUM(flags & 1 = 0), SUM(flags & 1 = 1)
  FROM trend_values GROUP BY 1, 2;
INSERT INTO rollup_daily (measure_pk, bucket_ns, min, max, sum, count, fault_count)
  SELECT measure_pk, start_ns - (start_ns % 86400000000000),
         MIN(CASE WHEN flags & 1 = 0 THEN value END), MAX(CASE WHEN flags & 1 = 0 THEN value END),
         TOTAL(CASE WHEN flags & 1 = 0 THEN value END), SUM(flags & 1 = 0), SUM(flags & 1 = 1)
  FROM trend_values GROUP BY 1, 2;
CREATE TABLE spectra (
  spectrum_pk    INTEGER PRIMARY KEY,
  point_pk       INTEGER NOT NULL REFERENCES points(point_pk),
  start_ns       INTEGER NOT NULL,
  end_ns         INTEGER NOT NULL,
  sample_rate_hz REAL NOT NULL,
  fft_length     INTEGER NOT NULL,
  segment_length INTEGER NOT NULL,
  segment_count  INTEGER NOT NULL,
  bin_count      INTEGER NOT NULL,
  window         TEXT NOT NULL,
  scaling        TEXT NOT NULL,
  unit           TEXT NOT NULL,
  data           BLOB NOT NULL
);
CREATE INDEX spectra_by_point_time ON spectra (point_pk, start_ns);
CREATE TABLE acknowledgements (
  ack_id      INTEGER PRIMARY KEY,
  point_pk    INTEGER NOT NULL REFERENCES points(point_pk),
  measure     TEXT NOT NULL DEFAULT '',
  ack_by      TEXT NOT NULL,
  time_ns     INTEGER NOT NULL,
  note        TEXT NOT NULL DEFAULT ''
);
CREATE TABLE outbox (
  outbox_pk   INTEGER PRIMARY KEY,
  event_id    TEXT NOT NULL UNIQUE REFERENCES alarm_events(event_id),
  payload     TEXT NOT NULL,
  created_ns  INTEGER NOT NULL,
  sent_ns     INTEGER
);
ALTER TABLE alarm_state ADD COLUMN ack_by TEXT NOT NULL DEFAULT '';
ALTER TABLE alarm_state ADD COLUMN ack_ns INTEGER NOT NULL DEFAULT 0;
ALTER TABLE alarm_state ADD COLUMN ack_note TEXT NOT NULL DEFAULT '';
)sql";

// Version 3: the alarm engine's full snapshot per state (latch level, on-delay history, flags), so a
// restarted daemon restores its alarms exactly. Older rows keep '' and restore from the summary.
constexpr const char* kToVersion3 = R"sql(
ALTER TABLE alarm_state ADD COLUMN engine_state TEXT NOT NULL DEFAULT '';
)sql";

// Version 4: learned baselines, one row per point and measure (baseline_store.h). A row whose
// learned_ns is NULL is still learning: its period [start_ns, end_ns) has not been evaluated.
constexpr const char* kToVersion4 = R"sql(
CREATE TABLE baselines (
  point       TEXT NOT NULL,
  measure     TEXT NOT NULL,
  median      REAL,
  mad         REAL,
  count       INTEGER NOT NULL DEFAULT 0,
  start_ns    INTEGER NOT NULL,
  end_ns      INTEGER NOT NULL,
  learned_ns  INTEGER,
  alert       REAL,
  danger      REAL,
  PRIMARY KEY (point, measure)
);
)sql";

constexpr const char* kSteps[] = {kToVersion1, kToVersion2, kToVersion3, kToVersion4};
static_assert(std::size(kSteps) == kSchemaVersion, "one migration step per schema version");

}  // namespace

Status Migrate(Db& db, const std::string& path, int target) {
  if (auto error = db.ExecCoded("BEGIN IMMEDIATE")) {
    return Status::Fail("cannot migrate '" + path + "': " + error->message);
  }
  auto fail = [&](const std::string& why) {
    db.ExecCoded("ROLLBACK");
    return Status::Fail("cannot migrate '" + path + "': " + why);
  };
  // Read again inside the transaction: another process may have migrated meanwhile.
  auto version = db.QueryInt("PRAGMA user_version");
  if (!version) return fail(version.message());
  if (*version > kSchemaVersion) {
    return fail("schema version " + std::to_string(*version) + " is newer than this build's " +
                std::to_string(kSchemaVersion));
  }
  for (int v = static_cast<int>(*version); v < target; ++v) {
    if (auto error = db.ExecCoded(kSteps[v])) {
      return fail("step to version " + std::to_string(v + 1) + ": " + error->message);
    }
  }
  if (*version < target) {
    if (auto error = db.ExecCoded("PRAGMA user_version = " + std::to_string(target))) {
      return fail(error->message);
    }
  }
  if (auto error = db.ExecCoded("COMMIT")) return fail(error->message);
  return Status::Ok();
}

}  // namespace spinward::storage::internal
