#include "alarm_snapshot_text.h"

#include <cerrno>
#include <cstdlib>
#include <map>
#include <sstream>

namespace spinward::daemon {
namespace {

// Appends `text` with backslash, CR and LF escaped, so every field stays on one line.
void AppendEscaped(std::string& out, const std::string& text) {
  for (char c : text) {
    if (c == '\\') {
      out += "\\\\";
    } else if (c == '\n') {
      out += "\\n";
    } else if (c == '\r') {
      out += "\\r";
    } else {
      out += c;
    }
  }
}

std::string Unescape(const std::string& text) {
  std::string out;
  for (std::size_t i = 0; i < text.size(); ++i) {
    if (text[i] == '\\' && i + 1 < text.size()) {
      const char next = text[++i];
      out += next == 'n' ? '\n' : next == 'r' ? '\r' : next;
    } else {
      out += text[i];
    }
  }
  return out;
}

Result<std::int64_t> ParseInt(const std::string& key, const std::string& text) {
  errno = 0;
  char* end = nullptr;
  long long value = std::strtoll(text.c_str(), &end, 10);
  if (text.empty() || *end != '\0' || errno == ERANGE) {
    return Error{"alarm snapshot: " + key + " '" + text + "' is not a whole number"};
  }
  return static_cast<std::int64_t>(value);
}

}  // namespace

std::string SnapshotToText(const AlarmSnapshot& s) {
  // Written once per record per limit set, so plain appends (no stream): it showed in profiles.
  std::string out;
  out.reserve(384);
  auto line = [&out](const char* key, const std::string& value) {
    out += key;
    out += '=';
    AppendEscaped(out, value);
    out += '\n';
  };
  line("version", "1");
  line("point", s.point_id);
  line("measure", s.measure);
  line("state", std::string(ToString(s.state)));
  line("state_since_ns", std::to_string(s.state_since_ns));
  line("condition", std::string(ToString(s.condition)));
  line("latched", std::string(ToString(s.latched)));
  line("acknowledged", s.acknowledged ? "1" : "0");
  if (s.last_ack) {
    line("ack_by", s.last_ack->by);
    line("ack_note", s.last_ack->note);
    line("ack_time_ns", std::to_string(s.last_ack->time_ns));
    line("ack_level", std::string(ToString(s.last_ack->level)));
  }
  line("on_delay_history", s.on_delay_history);
  line("below_reset_count", std::to_string(s.below_reset_count));
  line("sensor_fault", s.sensor_fault ? "1" : "0");
  line("sensor_fault_reason", s.sensor_fault_reason);
  line("stale", s.stale ? "1" : "0");
  line("learning", s.learning ? "1" : "0");
  if (s.last_data_ns) line("last_data_ns", std::to_string(*s.last_data_ns));
  if (s.watch_since_ns) line("watch_since_ns", std::to_string(*s.watch_since_ns));
  return out;
}

Result<AlarmSnapshot> SnapshotFromText(const std::string& text) {
  std::map<std::string, std::string> fields;
  std::istringstream in(text);
  std::string row;
  while (std::getline(in, row)) {
    if (row.empty()) continue;
    auto eq = row.find('=');
    if (eq == std::string::npos) return Error{"alarm snapshot: line '" + row + "' has no '='"};
    fields[row.substr(0, eq)] = Unescape(row.substr(eq + 1));
  }
  if (fields["version"] != "1") {
    return Error{"alarm snapshot: version '" + fields["version"] + "' is not 1"};
  }
  AlarmSnapshot s;
  s.point_id = fields["point"];
  s.measure = fields["measure"];
  auto state = [&](const std::string& key, AlarmState* out) -> Status {
    auto parsed = ParseAlarmState(fields[key]);
    if (!parsed.ok()) return Status::Fail("alarm snapshot: " + key + ": " + parsed.message());
    *out = *parsed;
    return Status::Ok();
  };
  auto integer = [&](const std::string& key, std::int64_t* out) -> Status {
    auto parsed = ParseInt(key, fields[key]);
    if (!parsed.ok()) return parsed.status();
    *out = *parsed;
    return Status::Ok();
  };
  if (Status st = state("state", &s.state); !st.ok()) return Error{st.message()};
  if (Status st = state("condition", &s.condition); !st.ok()) return Error{st.message()};
  if (Status st = state("latched", &s.latched); !st.ok()) return Error{st.message()};
  if (Status st = integer("state_since_ns", &s.state_since_ns); !st.ok())
    return Error{st.message()};
  s.acknowledged = fields["acknowledged"] == "1";
  if (fields.count("ack_by")) {
    AlarmAck ack;
    ack.by = fields["ack_by"];
    ack.note = fields["ack_note"];
    if (Status st = integer("ack_time_ns", &ack.time_ns); !st.ok()) return Error{st.message()};
    if (Status st = state("ack_level", &ack.level); !st.ok()) return Error{st.message()};
    s.last_ack = ack;
  }
  s.on_delay_history = fields["on_delay_history"];
  std::int64_t below = 0;
  if (Status st = integer("below_reset_count", &below); !st.ok()) return Error{st.message()};
  s.below_reset_count = static_cast<int>(below);
  s.sensor_fault = fields["sensor_fault"] == "1";
  s.sensor_fault_reason = fields["sensor_fault_reason"];
  s.stale = fields["stale"] == "1";
  s.learning = fields["learning"] == "1";
  if (fields.count("last_data_ns")) {
    std::int64_t v = 0;
    if (Status st = integer("last_data_ns", &v); !st.ok()) return Error{st.message()};
    s.last_data_ns = v;
  }
  if (fields.count("watch_since_ns")) {
    std::int64_t v = 0;
    if (Status st = integer("watch_since_ns", &v); !st.ok()) return Error{st.message()};
    s.watch_since_ns = v;
  }
  return s;
}

}  // namespace spinward::daemon
