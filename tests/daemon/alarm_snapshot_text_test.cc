// The alarm engine's snapshot as stored text (alarm_state.engine_state, docs/storage.md schema v3):
// every field must come back exactly, free text with newlines and backslashes included, and a
// damaged text must be refused with the name of the field that is wrong. The round-trip
// requirement is the project's own (docs/alarms.md: a restart restores the engine exactly).
#include "../../daemon/src/alarm_snapshot_text.h"  // private to daemon/

#include <gtest/gtest.h>

#include <string>

namespace spinward::daemon {
namespace {

AlarmSnapshot FullSnapshot() {
  AlarmSnapshot s;
  s.point_id = "P101-DE-H";
  s.measure = "velocity";
  s.state = AlarmState::kDanger;
  s.state_since_ns = 1'780'000'000'123'456'789;
  s.condition = AlarmState::kAlert;
  s.latched = AlarmState::kDanger;
  s.acknowledged = true;
  AlarmAck ack;
  ack.by = "R. Okafor\\night shift";  // a backslash in a name
  ack.note = "line one\nline two\r\nend with backslash \\";
  ack.time_ns = 1'780'000'100'000'000'001;
  ack.level = AlarmState::kDanger;
  s.last_ack = ack;
  s.on_delay_history = "0121";
  s.below_reset_count = 3;
  s.sensor_fault = true;
  s.sensor_fault_reason = "clipping: 7 samples\nat full scale 50 g";
  s.stale = true;
  s.learning = true;
  s.last_data_ns = -5;  // negative times are still whole numbers
  s.watch_since_ns = 42;
  return s;
}

void ExpectSame(const AlarmSnapshot& a, const AlarmSnapshot& b) {
  EXPECT_EQ(a.point_id, b.point_id);
  EXPECT_EQ(a.measure, b.measure);
  EXPECT_EQ(a.state, b.state);
  EXPECT_EQ(a.state_since_ns, b.state_since_ns);
  EXPECT_EQ(a.condition, b.condition);
  EXPECT_EQ(a.latched, b.latched);
  EXPECT_EQ(a.acknowledged, b.acknowledged);
  ASSERT_EQ(a.last_ack.has_value(), b.last_ack.has_value());
  if (a.last_ack) {
    EXPECT_EQ(a.last_ack->by, b.last_ack->by);
    EXPECT_EQ(a.last_ack->note, b.last_ack->note);
    EXPECT_EQ(a.last_ack->time_ns, b.last_ack->time_ns);
    EXPECT_EQ(a.last_ack->level, b.last_ack->level);
  }
  EXPECT_EQ(a.on_delay_history, b.on_delay_history);
  EXPECT_EQ(a.below_reset_count, b.below_reset_count);
  EXPECT_EQ(a.sensor_fault, b.sensor_fault);
  EXPECT_EQ(a.sensor_fault_reason, b.sensor_fault_reason);
  EXPECT_EQ(a.stale, b.stale);
  EXPECT_EQ(a.learning, b.learning);
  EXPECT_EQ(a.last_data_ns, b.last_data_ns);
  EXPECT_EQ(a.watch_since_ns, b.watch_since_ns);
}

TEST(AlarmSnapshotText, EveryFieldRoundTrips) {
  const AlarmSnapshot original = FullSnapshot();
  const std::string text = SnapshotToText(original);
  auto back = SnapshotFromText(text);
  ASSERT_TRUE(back.ok()) << back.message() << "\n" << text;
  ExpectSame(original, *back);
  // Writing the restored snapshot gives the same text: what AlarmStage compares to decide whether
  // a state changed and must be written again.
  EXPECT_EQ(SnapshotToText(*back), text);
}

TEST(AlarmSnapshotText, EscapedTextKeepsOneFieldPerLine) {
  const std::string text = SnapshotToText(FullSnapshot());
  // The note's newlines are escaped, so no line of the text starts with the note's second line.
  EXPECT_EQ(text.find("\nline two"), std::string::npos) << text;
  EXPECT_EQ(text.find("\nat full scale"), std::string::npos) << text;
  EXPECT_EQ(text.find('\r'), std::string::npos) << text;
}

TEST(AlarmSnapshotText, DefaultSnapshotWithoutOptionalFieldsRoundTrips) {
  AlarmSnapshot plain;
  plain.point_id = "F201-DE-H";
  plain.measure = "overall_rms";
  auto back = SnapshotFromText(SnapshotToText(plain));
  ASSERT_TRUE(back.ok()) << back.message();
  ExpectSame(plain, *back);
  EXPECT_FALSE(back->last_ack.has_value());
  EXPECT_FALSE(back->last_data_ns.has_value());
}

// Replaces the whole line `key=...` of a snapshot text.
std::string WithField(std::string text, const std::string& key, const std::string& value) {
  const auto start = text.find(key + "=");
  EXPECT_NE(start, std::string::npos) << key;
  const auto end = text.find('\n', start);
  return text.replace(start, end - start, key + "=" + value);
}

TEST(AlarmSnapshotText, BadFieldIsNamedInTheError) {
  const std::string good = SnapshotToText(FullSnapshot());
  struct Case {
    std::string key, value;
  };
  for (const Case& c :
       {Case{"state", "alarmed"}, Case{"condition", ""}, Case{"latched", "7"},
        Case{"state_since_ns", "12x"}, Case{"ack_time_ns", "soon"}, Case{"ack_level", "purple"},
        Case{"below_reset_count", ""}, Case{"last_data_ns", "1.5"}, Case{"watch_since_ns", "x"}}) {
    SCOPED_TRACE(c.key);
    auto parsed = SnapshotFromText(WithField(good, c.key, c.value));
    ASSERT_FALSE(parsed.ok());
    EXPECT_NE(parsed.message().find(c.key), std::string::npos) << parsed.message();
  }
}

TEST(AlarmSnapshotText, WrongVersionAndLineWithoutEqualsAreRefused) {
  const std::string good = SnapshotToText(FullSnapshot());
  auto version = SnapshotFromText(WithField(good, "version", "2"));
  ASSERT_FALSE(version.ok());
  EXPECT_NE(version.message().find("version"), std::string::npos) << version.message();
  EXPECT_NE(version.message().find("'2'"), std::string::npos) << version.message();

  auto garbled = SnapshotFromText(good + "no equals sign here\n");
  ASSERT_FALSE(garbled.ok());
  EXPECT_NE(garbled.message().find("no equals sign here"), std::string::npos) << garbled.message();
}

}  // namespace
}  // namespace spinward::daemon
