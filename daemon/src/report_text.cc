#include "report_text.h"

#include <cstdio>
#include <initializer_list>
#include <vector>

#include "report_wording.h"
#include "spinward/storage/time_text.h"

namespace spinward::daemon {
namespace {

std::string CsvField(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string out = "\"";
  for (char c : text) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + "\"";
}

std::string CsvRow(std::initializer_list<std::string> fields) {
  std::string out;
  bool first = true;
  for (const auto& f : fields) {
    if (!first) out += ',';
    out += CsvField(f);
    first = false;
  }
  return out + "\r\n";
}

std::string Number(std::optional<double> v) {
  if (!v) return "";
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.6g", *v);
  return buf;
}

std::string ForecastTime(const Forecast& f, int which) {
  if (f.kind != Forecast::Kind::kHeading) return "";
  if (which == 0) return storage::FormatIsoUtc(f.earliest_ns);
  if (which == 1) return storage::FormatIsoUtc(f.likely_ns);
  return f.latest_ns ? storage::FormatIsoUtc(*f.latest_ns) : "";
}

}  // namespace

std::string RenderReportText(const ReportModel& model, int max_lines) {
  const ReportOptions& o = model.options;
  std::string out =
      "Spinward nightly review, " + ReportTime(o.from_ns) + " to " + ReportTime(o.to_ns) + " UTC\n";
  out += std::string(kReportCaution) + "\n\n";
  out += "Points by state:";
  for (const auto& [state, n] : model.points_by_state) out += " " + state + " " + std::to_string(n);
  out += "\nAlarms: " + std::to_string(model.alarms_raised) + " raised, " +
         std::to_string(model.alarms_cleared) + " cleared, " + std::to_string(model.acks.size()) +
         " acknowledgements; " + std::to_string(model.sensor_fault_events) +
         " sensor-fault events.\n";
  out +=
      "Data completeness: " +
      ReportPercent(model.expected > 0 ? std::optional<double>(static_cast<double>(model.received) /
                                                               static_cast<double>(model.expected))
                                       : std::nullopt) +
      " of expected intervals.\n\nWhat changed (largest band moves first):\n";
  int n = 0;
  for (const auto& p : model.points) {
    if (n++ >= max_lines) break;
    const MeasureReview* k = p.Key();
    char line[256];
    std::snprintf(
        line, sizeof line, "%2d. %-14s %-8s %-22s now %s %s, %s vs baseline, %s vs 7 days\n", n,
        p.point_id.c_str(), p.state.c_str(), p.key_measure.c_str(),
        k ? ReportLevel(k->current).c_str() : "-", k ? k->measure.unit.c_str() : "",
        k ? ReportDb(k->vs_baseline_db).c_str() : "-", k ? ReportDb(k->vs_week_db).c_str() : "-");
    out += line;
    for (bool danger : {false, true}) {
      if (const MeasureReview* m = p.Soonest(danger)) {
        const Forecast& f = danger ? m->danger : m->alert;
        if (f.kind == Forecast::Kind::kHeading || f.kind == Forecast::Kind::kAlreadyBeyond) {
          out += std::string("    ") + (danger ? "danger" : "alert") + " (" + m->measure.name +
                 "): " + ForecastPhrase(f, o) + "\n";
        }
      }
    }
  }
  if (model.points.empty()) out += "  no points in the database for this period\n";
  return out;
}

std::map<std::string, std::string> RenderReportCsv(const ReportModel& model) {
  std::map<std::string, std::string> files;
  std::string& ranking = files["ranking.csv"];
  ranking = CsvRow({"rank", "point", "machine", "state", "key_band", "score_db", "received",
                    "expected", "completeness", "faulty_intervals", "detailed_because"});
  int rank = 0;
  for (const auto& p : model.points) {
    ranking +=
        CsvRow({std::to_string(++rank), p.point_id, p.machine, p.state, p.key_measure,
                Number(p.score_db), std::to_string(p.received), std::to_string(p.expected),
                Number(p.Completeness()), std::to_string(p.fault_intervals), p.why_detailed});
  }
  std::string& measures = files["measures.csv"];
  measures = CsvRow({"point",         "measure",        "kind",
                     "unit",          "state",          "now",
                     "baseline",      "week",           "vs_baseline_db",
                     "vs_week_db",    "alert_limit",    "danger_limit",
                     "alert_kind",    "alert_earliest", "alert_likely",
                     "alert_latest",  "danger_kind",    "danger_earliest",
                     "danger_likely", "danger_latest",  "trend_scale",
                     "trend_per_day"});
  for (const auto& p : model.points) {
    for (const auto& m : p.measures) {
      const Forecast& f = m.alert.kind != Forecast::Kind::kNoLimit ? m.alert : m.danger;
      const bool fitted =
          f.kind != Forecast::Kind::kNoLimit && f.kind != Forecast::Kind::kTooLittleData;
      measures += CsvRow({p.point_id,
                          m.measure.name,
                          m.measure.kind,
                          m.measure.unit,
                          m.state,
                          Number(m.current),
                          Number(m.baseline),
                          Number(m.week),
                          Number(m.vs_baseline_db),
                          Number(m.vs_week_db),
                          Number(m.limits.alert),
                          Number(m.limits.danger),
                          ForecastKind(m.alert),
                          ForecastTime(m.alert, 0),
                          ForecastTime(m.alert, 1),
                          ForecastTime(m.alert, 2),
                          ForecastKind(m.danger),
                          ForecastTime(m.danger, 0),
                          ForecastTime(m.danger, 1),
                          ForecastTime(m.danger, 2),
                          fitted ? (f.log_scale ? "log" : "linear") : "",
                          fitted ? Number(f.per_day) : ""});
    }
  }
  std::string& alarms = files["alarms.csv"];
  alarms = CsvRow({"time", "point", "measure", "from_state", "to_state", "value", "limit"});
  for (const auto& e : model.events) {
    alarms += CsvRow({storage::FormatIsoUtc(e.time_ns), e.point_id, e.measure, e.from_state,
                      e.to_state, Number(e.value), Number(e.limit)});
  }
  std::string& acks = files["acknowledgements.csv"];
  acks = CsvRow({"time", "point", "measure", "by", "note"});
  for (const auto& a : model.acks) {
    acks += CsvRow({storage::FormatIsoUtc(a.time_ns), a.point_id, a.measure, a.by, a.note});
  }
  return files;
}

}  // namespace spinward::daemon
