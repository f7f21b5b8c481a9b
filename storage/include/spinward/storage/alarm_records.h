// Storage-side records of alarms: what the database keeps of the alarm engine's decisions. Plain
// values with states as text ("normal", "alert", "danger", ...), so storage/ does not depend on the
// alarm engine; the daemon maps between the engine's types and these.
// Thread-safety: plain values.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

namespace spinward::storage {

// One state change of one point's measure, as it happened. `event_id` is unique and chosen by the
// producer (so a retried write cannot store an event twice).
struct AlarmEventRecord {
  std::string event_id;
  std::int64_t time_ns = 0;  // UTC ns since the Unix epoch
  std::string point_id;
  std::string measure;  // measure name, e.g. "velocity_rms_10_1000"
  std::string from_state;
  std::string to_state;
  double value = 0.0;           // the value that caused the change
  std::optional<double> limit;  // the limit crossed, if any
  std::string message;
  // Text for the outbox (the later messaging component). Empty: storage writes its own JSON
  // rendering of the event (docs/storage.md, "outbox").
  std::string outbox_payload;
};

// The current alarm state of one point's measure, persisted so a restart neither raises again nor
// forgets an alarm, a latch or an acknowledgement.
struct AlarmStateRecord {
  std::string point_id;
  std::string measure;
  std::string state;  // e.g. "normal", "alert", "danger"
  std::int64_t since_ns = 0;
  bool latched = false;  // held at its worst until acknowledged
  double last_value = 0.0;
  std::string last_event_id;
  std::string ack_by;  // empty when not acknowledged
  std::int64_t ack_ns = 0;
  std::string ack_note;
  std::int64_t updated_ns = 0;
  // The alarm engine's full snapshot as text (daemon/src/alarm_snapshot_text.h), so a restart
  // restores latch, acknowledgement and on-delay history exactly. Empty in databases before v3.
  std::string engine_state;
};

// An acknowledgement entered by a person (the CLI's `ack`), kept as history.
struct AcknowledgementRecord {
  std::int64_t ack_id = 0;  // assigned by the database, increasing
  std::string point_id;
  std::string measure;  // empty: every measure of the point
  std::string by;
  std::int64_t time_ns = 0;
  std::string note;
};

}  // namespace spinward::storage
