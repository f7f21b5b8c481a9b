-- A schema version 1 database as Spinward's first schema wrote it (storage/src/schema.cc,
-- kToVersion1, copied here verbatim), with a little data from the Larkfield booster station:
-- pump P-101's velocity band, nine 10-minute intervals from 2026-03-02T10:00Z (the fourth flagged
-- as a sensor fault), one alarm event and its state. The migration test loads this and opens it.
BEGIN;
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
INSERT INTO points (point_pk, point_id, created_ns) VALUES (1, 'P-101', 1772445600000000000);
INSERT INTO measures (measure_pk, point_pk, name, kind, unit, lo_hz, hi_hz)
  VALUES (1, 1, 'velocity_rms_10_1000', 'band', 'mm/s', 10.0, 1000.0);
INSERT INTO trend_values (measure_pk, start_ns, end_ns, value, flags) VALUES
  (1, 1772445600000000000, 1772446200000000000, 2.31, 0),
  (1, 1772446200000000000, 1772446800000000000, 2.45, 0),
  (1, 1772446800000000000, 1772447400000000000, 2.38, 0),
  (1, 1772447400000000000, 1772448000000000000, 9.99, 1),
  (1, 1772448000000000000, 1772448600000000000, 2.52, 0),
  (1, 1772448600000000000, 1772449200000000000, 2.41, 0),
  (1, 1772449200000000000, 1772449800000000000, 2.6, 0),
  (1, 1772449800000000000, 1772450400000000000, 2.71, 0),
  (1, 1772450400000000000, 1772451000000000000, 2.66, 0);
INSERT INTO alarm_events (event_id, time_ns, point_pk, measure, from_state, to_state, value,
                          limit_value, message)
  VALUES ('larkfield-0001', 1772449800000000000, 1, 'velocity_rms_10_1000', 'normal', 'alert', 2.71, 2.7,
          'P-101 velocity 2.71 mm/s above alert 2.7 mm/s');
INSERT INTO alarm_state (point_pk, measure, state, since_ns, latched, last_value, last_event_id,
                         updated_ns)
  VALUES (1, 'velocity_rms_10_1000', 'alert', 1772449800000000000, 1, 2.66, 'larkfield-0001', 1772451000000000000);
PRAGMA user_version = 1;
COMMIT;
