#include "spinward/storage/query_report.h"
#include "json_text.h"

#include <cmath>
#include <cstdio>
#include <optional>

#include "spinward/storage/time_text.h"

namespace spinward::storage {
namespace {

std::string Number(double v) {
  if (!std::isfinite(v)) return "";
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.10g", v);
  return buf;
}

std::string JsonNumber(double v) {
  std::string n = Number(v);
  return n.empty() ? "null" : n;
}

std::string JsonOptional(const std::optional<double>& v) { return v ? JsonNumber(*v) : "null"; }

// RFC 4180: quote a field holding a comma, quote or line break; double the quotes inside.
std::string Csv(std::string_view field) {
  if (field.find_first_of(",\"\r\n") == std::string_view::npos) return std::string(field);
  std::string out = "\"";
  for (char c : field) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + "\"";
}

std::string JsonTime(std::int64_t ns) { return JsonString(FormatIsoUtc(ns)); }

}  // namespace

Result<ReportFormat> ParseReportFormat(std::string_view text) {
  if (text == "csv") return ReportFormat::kCsv;
  if (text == "json") return ReportFormat::kJson;
  return Error{"format '" + std::string(text) + "' is not one of csv, json"};
}

std::string RenderTrend(const TrendQuery& query, std::string_view unit,
                        const std::vector<TrendRow>& rows, ReportFormat format) {
  std::string out;
  if (format == ReportFormat::kCsv) {
    out = "start_utc,end_utc,value,min,max,count,sensor_fault_count,unit\n";
    for (const auto& r : rows) {
      out += FormatIsoUtc(r.start_ns) + "," + FormatIsoUtc(r.end_ns) + "," + Number(r.value) + "," +
             Number(r.min) + "," + Number(r.max) + "," + std::to_string(r.count) + "," +
             std::to_string(r.fault_count) + "," + Csv(unit) + "\n";
    }
    return out;
  }
  out = "{\"point\":" + JsonString(query.point_id) + ",\"measure\":" + JsonString(query.measure) +
        ",\"unit\":" + JsonString(unit) + ",\"level\":" + JsonString(ToString(query.level)) +
        ",\"rows\":[";
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const auto& r = rows[i];
    out += std::string(i ? "," : "") + "\n{\"start\":" + JsonTime(r.start_ns) +
           ",\"end\":" + JsonTime(r.end_ns) + ",\"start_ns\":" + std::to_string(r.start_ns) +
           ",\"value\":" + JsonNumber(r.value) + ",\"min\":" + JsonNumber(r.min) +
           ",\"max\":" + JsonNumber(r.max) + ",\"count\":" + std::to_string(r.count) +
           ",\"sensor_fault_count\":" + std::to_string(r.fault_count) + "}";
  }
  return out + "]}\n";
}

std::string RenderAlarms(const std::vector<AlarmEventRecord>& events, ReportFormat format) {
  std::string out;
  if (format == ReportFormat::kCsv) {
    out = "time_utc,point,measure,from_state,to_state,value,limit,message,event_id\n";
    for (const auto& e : events) {
      out += FormatIsoUtc(e.time_ns) + "," + Csv(e.point_id) + "," + Csv(e.measure) + "," +
             Csv(e.from_state) + "," + Csv(e.to_state) + "," + Number(e.value) + "," +
             (e.limit ? Number(*e.limit) : "") + "," + Csv(e.message) + "," + Csv(e.event_id) +
             "\n";
    }
    return out;
  }
  out = "{\"events\":[";
  for (std::size_t i = 0; i < events.size(); ++i) {
    const auto& e = events[i];
    out += std::string(i ? "," : "") + "\n{\"time\":" + JsonTime(e.time_ns) +
           ",\"time_ns\":" + std::to_string(e.time_ns) + ",\"point\":" + JsonString(e.point_id) +
           ",\"measure\":" + JsonString(e.measure) + ",\"from_state\":" + JsonString(e.from_state) +
           ",\"to_state\":" + JsonString(e.to_state) + ",\"value\":" + JsonNumber(e.value) +
           ",\"limit\":" + JsonOptional(e.limit) + ",\"message\":" + JsonString(e.message) +
           ",\"event_id\":" + JsonString(e.event_id) + "}";
  }
  return out + "]}\n";
}

std::string RenderStatus(const std::vector<MeasureStatus>& rows, ReportFormat format) {
  std::string out;
  if (format == ReportFormat::kCsv) {
    out = "point,measure,unit,latest_value,latest_utc,sensor_fault,alarm_state,latched,ack_by\n";
    for (const auto& r : rows) {
      out += Csv(r.point_id) + "," + Csv(r.measure) + "," + Csv(r.unit) + "," +
             (r.latest_value ? Number(*r.latest_value) : "") + "," +
             (r.latest_value ? FormatIsoUtc(r.latest_start_ns) : "") + "," +
             (r.latest_sensor_fault ? "1" : "0") + "," + (r.alarm ? Csv(r.alarm->state) : "") +
             "," + (r.alarm && r.alarm->latched ? "1" : "0") + "," +
             (r.alarm ? Csv(r.alarm->ack_by) : "") + "\n";
    }
    return out;
  }
  out = "{\"measures\":[";
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const auto& r = rows[i];
    out += std::string(i ? "," : "") + "\n{\"point\":" + JsonString(r.point_id) +
           ",\"measure\":" + JsonString(r.measure) + ",\"unit\":" + JsonString(r.unit) +
           ",\"latest_value\":" + JsonOptional(r.latest_value) +
           ",\"latest\":" + (r.latest_value ? JsonTime(r.latest_start_ns) : "null") +
           ",\"sensor_fault\":" + (r.latest_sensor_fault ? "true" : "false") + ",\"alarm\":";
    if (r.alarm) {
      out += "{\"state\":" + JsonString(r.alarm->state) +
             ",\"since\":" + JsonTime(r.alarm->since_ns) +
             ",\"latched\":" + (r.alarm->latched ? "true" : "false") +
             ",\"ack_by\":" + JsonString(r.alarm->ack_by) +
             ",\"ack_note\":" + JsonString(r.alarm->ack_note) + "}";
    } else {
      out += "null";
    }
    out += "}";
  }
  return out + "]}\n";
}

}  // namespace spinward::storage
