#include "metrics_text.h"

#include <charconv>
#include <cstdint>
#include <map>
#include <string_view>

namespace spinward::daemon {

namespace {

// Label values escape backslash, double quote and line feed; HELP text escapes backslash and line
// feed (the 0.0.4 text format's two escaping rules).
std::string Escape(std::string_view text, bool quote) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    if (c == '\\') {
      out += "\\\\";
    } else if (c == '\n') {
      out += "\\n";
    } else if (c == '"' && quote) {
      out += "\\\"";
    } else {
      out += c;
    }
  }
  return out;
}

void Family(std::string& out, std::string_view name, std::string_view type, std::string_view help) {
  out += "# HELP ";
  out += name;
  out += ' ';
  out += Escape(help, false);
  out += "\n# TYPE ";
  out += name;
  out += ' ';
  out += type;
  out += '\n';
}

void Sample(std::string& out, std::string_view name, std::uint64_t value,
            std::string_view label = {}, std::string_view label_value = {}) {
  out += name;
  if (!label.empty()) {
    out += '{';
    out += label;
    out += "=\"";
    out += Escape(label_value, true);
    out += "\"}";
  }
  out += ' ';
  out += std::to_string(value);
  out += '\n';
}

// Seconds and other fractional values: shortest round-trip text (std::to_chars), which the text
// format's Go-style float syntax accepts.
void Sample(std::string& out, std::string_view name, double value) {
  char buf[32];
  auto end = std::to_chars(buf, buf + sizeof buf, value).ptr;
  out += name;
  out += ' ';
  out.append(buf, end);
  out += '\n';
}

void Counter(std::string& out, std::string_view name, std::string_view help, std::uint64_t value) {
  Family(out, name, "counter", help);
  Sample(out, name, value);
}

void Gauge(std::string& out, std::string_view name, std::string_view help, std::uint64_t value) {
  Family(out, name, "gauge", help);
  Sample(out, name, value);
}

}  // namespace

std::string RenderMetricsText(const HealthSnapshot& s) {
  std::string out;
  Counter(out, "spinward_frames_received_total", "Frames received and decoded by all listeners.",
          s.sources.frames);
  Counter(out, "spinward_bytes_received_total", "Bytes received by all listeners.",
          s.sources.bytes);

  constexpr std::string_view kBad = "spinward_bad_frames_total";
  Family(out, kBad, "counter", "Frames rejected as malformed, by reason.");
  std::uint64_t by_reason = 0;
  for (const auto& [reason, count] : s.sources.bad_frames_by_reason) {
    Sample(out, kBad, count, "reason", reason);
    by_reason += count;
  }
  // A source that counts bad frames without a reason still shows up, so the family sums to the
  // total.
  if (s.sources.bad_frames > by_reason)
    Sample(out, kBad, s.sources.bad_frames - by_reason, "reason", "unspecified");

  Counter(out, "spinward_dropped_frames_total",
          "Frames dropped because a point's queue was full (UDP; TCP pauses instead).",
          s.sources.dropped_full);
  Counter(out, "spinward_segments_total", "Welch segments processed over all points.",
          s.router.segments);
  Counter(out, "spinward_records_total", "Measurement records produced over all points.",
          s.router.records);
  Gauge(out, "spinward_queue_depth_samples", "Samples queued for the point pipelines now.",
        s.router.queued_samples);
  Family(out, "spinward_processing_lag_seconds", "gauge",
         "Signal waiting for its pipeline at the point furthest behind, in seconds.");
  Sample(out, "spinward_processing_lag_seconds", s.router.max_queued_seconds);
  // A summary without quantiles: rate(_sum) / rate(_count) is the mean commit time.
  Family(out, "spinward_storage_commit_seconds", "summary",
         "Time the storage writer spent committing transactions (database write latency).");
  Sample(out, "spinward_storage_commit_seconds_count", s.storage_commits);
  Sample(out, "spinward_storage_commit_seconds_sum", s.storage_commit_seconds);
  Gauge(out, "spinward_storage_backlog_items",
        "Records accepted by the storage writer and not yet written.", s.storage_backlog_items);
  Gauge(out, "spinward_storage_writable",
        "1 while the storage writer commits; 0 while a failed commit waits for its retry.",
        s.storage_writable ? 1 : 0);

  constexpr std::string_view kByState = "spinward_points_by_state";
  Family(out, kByState, "gauge", "Points by their worst alarm state (unknown: none stored yet).");
  std::map<std::string, std::uint64_t> by_state;
  for (const auto& point : s.points) ++by_state[point.state.empty() ? "unknown" : point.state];
  for (const auto& [state, count] : by_state) Sample(out, kByState, count, "state", state);

  if (s.messaging_configured) {
    Gauge(out, "spinward_broker_connected", "1 while an MQTT session with the broker is open.",
          s.broker_connected ? 1 : 0);
    Counter(out, "spinward_alarms_published_total",
            "Alarm transitions acknowledged by the broker (PUBACK).", s.alarms_published);
    Gauge(out, "spinward_outbox_pending", "Alarm transitions stored and not yet acknowledged.",
          s.outbox_pending);
    Counter(out, "spinward_band_messages_published_total", "Band-value messages published.",
            s.band_messages_published);
    Counter(out, "spinward_band_messages_skipped_total",
            "Band-value messages due while the broker was not connected.", s.band_messages_skipped);
  }
  return out;
}

}  // namespace spinward::daemon
