#include "report_html.h"

#include <algorithm>
#include <cmath>

#include "report_wording.h"
#include "svg_chart.h"

namespace spinward::daemon {
namespace {

constexpr const char* kStyle = R"css(
body{font-family:system-ui,sans-serif;margin:0 auto;max-width:1100px;padding:0 16px 40px;color:#1d2329;background:#fbfbf8}
h1{font-size:1.5em;margin:18px 0 4px}h2{border-bottom:2px solid #c9d3d6;padding-bottom:3px;margin-top:30px}
.caution{background:#fff4d6;border:2px solid #d99a00;padding:10px 14px;margin:14px 0;font-weight:600}
table{border-collapse:collapse;margin:8px 0;font-size:.92em}th,td{border:1px solid #c9d3d6;padding:3px 8px;text-align:left}
th{background:#e8eef0}td.num{text-align:right;font-variant-numeric:tabular-nums}
.state-danger{background:#f6c9c4}.state-alert{background:#fde6b0}.state-sensor_fault,.state-stale{background:#dcd6f0}
article.point{border:1px solid #c9d3d6;background:#fff;padding:6px 14px 12px;margin:16px 0}
svg.chart{display:block;margin:8px 0;background:#fff}svg .plot{fill:#fcfdfd;stroke:#9aa7ab}
svg .grid{stroke:#e3e8ea}svg .tick{font-size:10px;fill:#44515a}svg .axis-title{font-size:11px;fill:#1d2329}
svg .chart-title{font-size:12px;font-weight:600}svg .series{fill:none;stroke-width:1.6}
svg .mean{stroke:#1f5f8b}svg .range{stroke:#a9c4d6;stroke-width:1}svg .latest{stroke:#b2401d}svg .baseline{stroke:#6d7f86}
svg .limit line{stroke-dasharray:6 4;stroke-width:1.4}svg .limit text{font-size:10px}
svg .alert-limit line{stroke:#d99a00}svg .alert-limit text{fill:#a87700}svg .danger-limit line{stroke:#c0271a}svg .danger-limit text{fill:#c0271a}
svg .mark line{stroke-width:1;stroke-dasharray:2 3}svg .mark text{font-size:9px}
svg .event line{stroke:#c0271a}svg .event text{fill:#c0271a}svg .ack line{stroke:#2d7d3a}svg .ack text{fill:#2d7d3a}
svg .harmonic line{stroke:#6a4fa3}svg .harmonic text{fill:#6a4fa3}svg .defect line{stroke:#b2401d}svg .defect text{fill:#b2401d}
svg .no-data{fill:#8a969b}.legend span{margin-right:14px}.muted{color:#5c6a70}
)css";

std::string Cell(const std::string& text, bool num = false) {
  return std::string(num ? "<td class=\"num\">" : "<td>") + EscapeXml(text) + "</td>";
}

std::string StateCell(const std::string& state) {
  return "<td class=\"state-" + EscapeXml(state) + "\">" + EscapeXml(state) + "</td>";
}

std::string Anchor(const std::string& point_id) { return "point-" + point_id; }

double Seconds(std::int64_t ns) { return static_cast<double>(ns) / 1e9; }

std::string TrendChart(const PointReview& point, const MeasureReview& m,
                       const ReportOptions& options) {
  ChartSpec spec;
  spec.css_class = "trend-chart";
  spec.data_point = point.point_id;
  spec.title = point.point_id + " " + m.measure.name + ": hourly mean, min and max";
  spec.x_title = "time (UTC)";
  spec.y_title = m.measure.name + " (" + (m.measure.unit.empty() ? "1" : m.measure.unit) + ")";
  spec.x_is_time = true;
  spec.x_min = Seconds(options.from_ns);
  spec.x_max = Seconds(options.to_ns);
  ChartSeries mean{{}, {}, "hourly mean", "mean"}, lo{{}, {}, "hourly min", "range"},
      hi{{}, {}, "hourly max", "range"};
  for (const auto& r : m.hours) {
    const double x = Seconds(r.start_ns) + 1800.0;
    mean.x.push_back(x);
    mean.y.push_back(r.value);
    lo.x.push_back(x);
    lo.y.push_back(r.min);
    hi.x.push_back(x);
    hi.y.push_back(r.max);
  }
  spec.series = {lo, hi, mean};
  if (m.limits.alert)
    spec.lines.push_back({*m.limits.alert, "alert " + ReportLevel(m.limits.alert), "alert-limit"});
  if (m.limits.danger)
    spec.lines.push_back(
        {*m.limits.danger, "danger " + ReportLevel(m.limits.danger), "danger-limit"});
  for (const auto& e : point.events) {
    if (e.measure == m.measure.name) {
      spec.marks.push_back({Seconds(e.time_ns), e.to_state, "event"});
    }
  }
  for (const auto& a : point.acks) {
    if (a.measure.empty() || a.measure == m.measure.name) {
      spec.marks.push_back({Seconds(a.time_ns), "ack " + a.by, "ack"});
    }
  }
  return RenderSvgChart(spec);
}

std::string SpectrumChart(const PointReview& point) {
  ChartSpec spec;
  spec.css_class = "spectrum-chart";
  spec.data_point = point.point_id;
  spec.x_title = "frequency (Hz)";
  spec.y_log = true;
  const auto& latest = point.latest_spectrum->snapshot;
  spec.y_title = "PSD (" + latest.unit + ")";
  const double nyquist = latest.spectrum.sample_rate_hz / 2.0;
  double f_max = nyquist;
  if (point.speed_rpm) f_max = std::min(nyquist, std::max(1000.0, 12.0 * *point.speed_rpm / 60.0));
  for (const auto& [name, hz] : point.defect_lines)
    f_max = std::min(nyquist, std::max(f_max, 5.5 * hz));
  spec.x_min = 0.0;
  spec.x_max = f_max;
  spec.title = point.point_id + ": latest spectrum (" +
               ReportTime(point.latest_spectrum->start_ns) + ")" +
               (point.baseline_spectrum
                    ? " over baseline (" + ReportTime(point.baseline_spectrum->start_ns) + ")"
                    : std::string(", no baseline spectrum"));
  auto series = [](const storage::StoredSpectrum& s, const std::string& label,
                   const std::string& css) {
    ChartSeries out{s.snapshot.spectrum.FrequenciesHz(), s.snapshot.spectrum.values, label, css};
    return out;
  };
  if (point.baseline_spectrum && point.baseline_spectrum->snapshot.unit == latest.unit) {
    spec.series.push_back(series(*point.baseline_spectrum, "baseline spectrum", "baseline"));
  }
  spec.series.push_back(series(*point.latest_spectrum, "latest spectrum", "latest"));
  if (point.speed_rpm) {
    const double shaft_hz = *point.speed_rpm / 60.0;
    for (int k = 1; k * shaft_hz <= f_max && k <= 10; ++k) {
      spec.marks.push_back({k * shaft_hz, std::to_string(k) + "x", "harmonic"});
    }
  }
  for (const auto& [name, hz] : point.defect_lines) spec.marks.push_back({hz, name, "defect"});
  return RenderSvgChart(spec);
}

std::string ForecastCell(const PointReview& point, bool danger, const ReportOptions& options) {
  const MeasureReview* m = point.Soonest(danger);
  if (m == nullptr) return Cell("no limit");
  const Forecast& f = danger ? m->danger : m->alert;
  std::string text = ForecastPhrase(f, options);
  if (f.kind == Forecast::Kind::kHeading || f.kind == Forecast::Kind::kAlreadyBeyond) {
    text += " [" + m->measure.name + "]";
  }
  return "<td class=\"forecast\" data-kind=\"" + ForecastKind(f) + "\">" + EscapeXml(text) +
         "</td>";
}

}  // namespace

std::string RenderReportHtml(const ReportModel& model, std::int64_t generated_ns) {
  const ReportOptions& o = model.options;
  std::string out;
  out.reserve(1 << 20);
  const std::string period = ReportTime(o.from_ns) + " to " + ReportTime(o.to_ns) + " UTC";
  out += "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n";
  out += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
  out += "<title>Spinward nightly review, " + EscapeXml(period) + "</title>\n";
  out += std::string("<style>") + kStyle + "</style></head><body>\n";
  out += "<h1>Nightly review: " + EscapeXml(period) + "</h1>\n";
  out += "<p class=\"muted\">Written " + EscapeXml(ReportTime(generated_ns)) + " UTC by spinward" +
         (o.machine.empty() ? std::string() : ", machine " + EscapeXml(o.machine)) + ".</p>\n";
  out += "<div id=\"caution\" class=\"caution\" role=\"note\">" + EscapeXml(kReportCaution) +
         "</div>\n";

  // Summary.
  out += "<section id=\"summary\"><h2>Summary</h2>\n<table><tr><th>points by state</th><td>";
  bool first = true;
  for (const auto& [state, n] : model.points_by_state) {
    out += (first ? "" : ", ") + EscapeXml(state) + ": " + std::to_string(n);
    first = false;
  }
  if (model.points_by_state.empty()) out += "no points";
  out += "</td></tr>\n";
  out += "<tr><th>alarms raised</th>" + Cell(std::to_string(model.alarms_raised), true) + "</tr>\n";
  out +=
      "<tr><th>alarms cleared</th>" + Cell(std::to_string(model.alarms_cleared), true) + "</tr>\n";
  out +=
      "<tr><th>acknowledgements</th>" + Cell(std::to_string(model.acks.size()), true) + "</tr>\n";
  std::int64_t faults = 0;
  for (const auto& p : model.points) faults += p.fault_intervals;
  out += "<tr><th>sensor faults</th>" +
         Cell(std::to_string(model.sensor_fault_events) + " events, " + std::to_string(faults) +
                  " faulty intervals",
              true) +
         "</tr>\n";
  out += "<tr><th>data completeness</th>" +
         Cell(ReportPercent(model.expected > 0
                                ? std::optional<double>(static_cast<double>(model.received) /
                                                        static_cast<double>(model.expected))
                                : std::nullopt) +
                  " of expected intervals (" + std::to_string(model.received) + " of " +
                  std::to_string(model.expected) + ")",
              true) +
         "</tr></table>\n";
  out +=
      "<table class=\"completeness\"><tr><th>point</th><th>received</th><th>expected</th>"
      "<th>completeness</th><th>faulty intervals</th></tr>\n";
  for (const auto& p : model.points) {
    out += "<tr>" + Cell(p.point_id) + Cell(std::to_string(p.received), true) +
           Cell(std::to_string(p.expected), true) + Cell(ReportPercent(p.Completeness()), true) +
           Cell(std::to_string(p.fault_intervals), true) + "</tr>\n";
  }
  out += "</table></section>\n";

  // What changed.
  out +=
      "<section id=\"changes\"><h2>What changed</h2>\n<p>Points ranked by how far their bands "
      "moved: the largest change, in dB, of a band's current level (median of the hourly means "
      "of the last " +
      std::to_string(o.current_window_ns / kReportHourNs) +
      " h) against its baseline or against the 7 days before. Forecasts: when the Theil-Sen "
      "line through the last " +
      std::to_string(o.fit_window_ns / kReportHourNs) +
      " h of hourly means reaches the limit, with its " +
      std::to_string(static_cast<int>(std::lround(o.confidence * 100))) + " % range (UTC).</p>\n";
  out +=
      "<table class=\"ranking\"><tr><th>#</th><th>point</th><th>machine</th><th>state</th>"
      "<th>band</th><th>now</th><th>baseline</th><th>vs baseline</th><th>vs 7 days</th>"
      "<th>reaches alert</th><th>reaches danger</th><th>completeness</th></tr>\n";
  int rank = 0;
  for (const auto& p : model.points) {
    const MeasureReview* k = p.Key();
    const std::string unit = k ? " " + k->measure.unit : "";
    out += "<tr class=\"rank\" data-point=\"" + EscapeXml(p.point_id) + "\">" +
           Cell(std::to_string(++rank), true) + "<td>" +
           (p.why_detailed.empty() ? EscapeXml(p.point_id)
                                   : "<a href=\"#" + EscapeXml(Anchor(p.point_id)) + "\">" +
                                         EscapeXml(p.point_id) + "</a>") +
           "</td>" + Cell(p.machine) + StateCell(p.state) + Cell(p.key_measure) +
           Cell(k ? ReportLevel(k->current) + unit : "-", true) +
           Cell(k ? ReportLevel(k->baseline) + unit : "-", true) +
           Cell(k ? ReportDb(k->vs_baseline_db) : "-", true) +
           Cell(k ? ReportDb(k->vs_week_db) : "-", true) + ForecastCell(p, false, o) +
           ForecastCell(p, true, o) + Cell(ReportPercent(p.Completeness()), true) + "</tr>\n";
  }
  out += "</table></section>\n";

  // Alarm events and acknowledgements.
  out += "<section id=\"alarms\"><h2>Alarms and acknowledgements</h2>\n";
  out +=
      "<table class=\"events\"><tr><th>time (UTC)</th><th>point</th><th>measure</th>"
      "<th>from</th><th>to</th><th>value</th><th>limit</th></tr>\n";
  for (const auto& e : model.events) {
    out += "<tr>" + Cell(ReportTime(e.time_ns)) + Cell(e.point_id) + Cell(e.measure) +
           Cell(e.from_state) + StateCell(e.to_state) + Cell(ReportLevel(e.value), true) +
           Cell(ReportLevel(e.limit), true) + "</tr>\n";
  }
  if (model.events.empty())
    out += "<tr><td colspan=\"7\">no alarm events in the period</td></tr>\n";
  out +=
      "</table>\n<table class=\"acks\"><tr><th>time (UTC)</th><th>point</th><th>measure</th>"
      "<th>by</th><th>note</th></tr>\n";
  for (const auto& a : model.acks) {
    out += "<tr>" + Cell(ReportTime(a.time_ns)) + Cell(a.point_id) +
           Cell(a.measure.empty() ? "all" : a.measure) + Cell(a.by) + Cell(a.note) + "</tr>\n";
  }
  if (model.acks.empty())
    out += "<tr><td colspan=\"5\">no acknowledgements in the period</td></tr>\n";
  out += "</table></section>\n";

  // Points in detail.
  out += "<section id=\"points\"><h2>Points in detail</h2>\n";
  out +=
      "<p class=\"legend\"><span>blue: hourly mean</span><span>light blue: hourly min and max"
      "</span><span>dashed: alert and danger limits</span><span>dotted red: alarm events</span>"
      "<span>dotted green: acknowledgements</span><span>spectra: red latest, grey baseline, "
      "violet shaft harmonics</span></p>\n";
  for (const auto& p : model.points) {
    if (p.why_detailed.empty()) continue;
    out += "<article class=\"point\" id=\"" + EscapeXml(Anchor(p.point_id)) + "\" data-point=\"" +
           EscapeXml(p.point_id) + "\"><h3>" + EscapeXml(p.point_id) +
           (p.machine.empty() ? "" : " (" + EscapeXml(p.machine) + ")") + ": " +
           EscapeXml(p.state) +
           "</h3>\n<p class=\"muted\">Shown because: " + EscapeXml(p.why_detailed) + ".</p>\n";
    out +=
        "<table class=\"measures\"><tr><th>measure</th><th>unit</th><th>state</th><th>now</th>"
        "<th>baseline</th><th>7 days</th><th>vs baseline</th><th>vs 7 days</th><th>alert</th>"
        "<th>danger</th><th>reaches alert</th><th>reaches danger</th><th>trend</th></tr>\n";
    for (const auto& m : p.measures) {
      const Forecast& f = m.alert.kind != Forecast::Kind::kNoLimit ? m.alert : m.danger;
      out += "<tr>" + Cell(m.measure.name) + Cell(m.measure.unit) + StateCell(m.state) +
             Cell(ReportLevel(m.current), true) + Cell(ReportLevel(m.baseline), true) +
             Cell(ReportLevel(m.week), true) + Cell(ReportDb(m.vs_baseline_db), true) +
             Cell(ReportDb(m.vs_week_db), true) + Cell(ReportLevel(m.limits.alert), true) +
             Cell(ReportLevel(m.limits.danger), true) + Cell(ForecastPhrase(m.alert, o)) +
             Cell(ForecastPhrase(m.danger, o)) + Cell(TrendRate(f, m.measure.unit), true) +
             "</tr>\n";
    }
    out += "</table>\n";
    if (const MeasureReview* k = p.Key(); k && !k->baseline_source.empty()) {
      out += "<p class=\"muted\">Baseline: " + EscapeXml(k->baseline_source) + ".</p>\n";
    }
    for (const auto& m : p.measures) {
      if (m.measure.kind == "band" || m.limits.alert || m.limits.danger) {
        out += TrendChart(p, m, o);
      }
    }
    if (p.latest_spectrum) {
      out += SpectrumChart(p);
      if (!p.speed_rpm) {
        out +=
            "<p class=\"muted\">Shaft harmonics not marked: the machine's speed is unknown "
            "(give the site file with --config).</p>\n";
      }
      if (p.defect_lines.empty()) {
        out +=
            "<p class=\"muted\">Bearing defect frequencies not marked: no bearing is known "
            "for this point.</p>\n";
      }
    } else {
      out += "<p class=\"muted\">No spectrum stored for this point before the period's end.</p>\n";
    }
    out += "</article>\n";
  }
  out += "</section>\n";

  out +=
      "<section id=\"method\"><h2>How this report is made</h2>\n<p>Levels are medians of "
      "hourly means, so single spikes and sensor-fault intervals (never averaged) do not move "
      "them. Changes are 20 log10 of level ratios. The forecast fits a Theil-Sen line (Theil "
      "1950, Sen 1968): the median of all pairwise slopes, with Sen's distribution-free range "
      "for the slope; the range's steepest and shallowest slopes give the earliest and latest "
      "dates. Two lines are fitted, to the values (a steady step per day) and to their "
      "logarithm (a steady factor per day, as a spreading defect grows); the better-fitting "
      "one gives the likely date and the range spans both. A forecast is an extrapolation: "
      "read the earliest date too. Completeness is the share of the point's usual intervals per "
      "hour "
      "(the median over hours with data) received in the period's whole hours.</p>\n"
      "<p>" +
      EscapeXml(kReportCaution) + "</p></section>\n";
  out += "</body></html>\n";
  return out;
}

}  // namespace spinward::daemon
