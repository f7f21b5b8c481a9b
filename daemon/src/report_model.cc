// The ranking compares robust levels (medians of hourly means) rather than single intervals, so a
// spike or a sensor fault cannot put a point at the top; changes are in dB because band values are
// RMS amplitudes whose ratios matter more than their differences (a 1 -> 2 mm/s rise is as notable
// on a quiet pump as 4 -> 8 on a rough one). Forecasts fit hourly means, not raw intervals: the
// Theil-Sen fit is O(n^2) in points, and hourly means already smooth the interval-to-interval
// scatter. Only hourly roll-ups are read (docs/report.md).
#include "report_model.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <set>

#include "spinward/daemon/alarm_state.h"
#include "spinward/estimators/trend_forecast.h"

namespace spinward::daemon {
namespace {

std::optional<double> MedianOfMeans(const std::vector<storage::TrendRow>& rows, std::int64_t from,
                                    std::int64_t to) {
  std::vector<double> v;
  for (const auto& r : rows) {
    if (r.start_ns >= from && r.start_ns < to && std::isfinite(r.value)) v.push_back(r.value);
  }
  if (v.empty()) return std::nullopt;
  std::sort(v.begin(), v.end());
  const std::size_t n = v.size();
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

std::optional<double> ChangeDb(std::optional<double> now, std::optional<double> reference) {
  if (!now || !reference || !(*now > 0.0) || !(*reference > 0.0)) return std::nullopt;
  return 20.0 * std::log10(*now / *reference);
}

std::int64_t ToNs(double hours_from_to, std::int64_t to_ns) {
  return to_ns + static_cast<std::int64_t>(std::llround(hours_from_to * 3600.0 * 1e9));
}

// Fits the hourly means of the fit window and projects them to `limit`. Each mean is placed where
// its intervals sit in the hour (measured on the window's last hour: the middle for continuous
// data, the top of the hour for a snapshot taken then). Wear may grow a band by a steady step
// (a straight line) or by a steady factor (a straight line of the logarithm, the exponential
// growth of a spreading defect); the window alone rarely settles which. Both are fitted when the
// values are positive: the likely date comes from the one whose median absolute residual is
// smaller, and the range spans both models' ranges, so it stays honest about the choice
// (docs/report.md).
struct GrowthModel {
  bool log_scale = false;
  estimators::TheilSenFit fit;
  double median_abs_residual = 0.0;
};

struct TrendFit {
  int fitted_hours = 0;
  double last_value = 0.0;
  std::vector<GrowthModel> models;  // empty: too little data
};

// The fits do not depend on the limit: made once per measure, projected to each limit.
Result<TrendFit> FitTrend(storage::ReportReader& reader, std::int64_t measure_pk,
                          const std::vector<storage::TrendRow>& rows,
                          const ReportOptions& options) {
  TrendFit t;
  std::vector<const storage::TrendRow*> fitted;
  const std::int64_t fit_from = options.to_ns - options.fit_window_ns;
  for (const auto& r : rows) {
    if (r.start_ns < fit_from || r.start_ns >= options.to_ns || !std::isfinite(r.value)) continue;
    fitted.push_back(&r);
  }
  t.fitted_hours = static_cast<int>(fitted.size());
  if (t.fitted_hours < options.min_fit_hours) return t;
  auto centre = reader.HourCentre(measure_pk, fitted.back()->start_ns);
  if (!centre) return centre.status();
  const double offset_h = centre->value_or(0.5 * 3.6e12) / 3.6e12;
  std::vector<double> x, y;
  for (const auto* r : fitted) {
    // Hours relative to the report's end: small numbers, well conditioned.
    x.push_back(static_cast<double>(r->start_ns - options.to_ns) / 3.6e12 + offset_h);
    y.push_back(r->value);
  }
  t.last_value = y.back();
  const bool positive = std::all_of(y.begin(), y.end(), [](double v) { return v > 0.0; });
  for (bool log_scale : {false, true}) {
    if (log_scale && !positive) continue;
    std::vector<double> scaled;
    for (double v : y) scaled.push_back(log_scale ? std::log(v) : v);
    auto fit = estimators::FitTheilSen(x, scaled, options.confidence);
    if (!fit) continue;
    std::vector<double> residuals;
    for (std::size_t i = 0; i < x.size(); ++i) {
      const double predicted = log_scale ? std::exp(fit->At(x[i])) : fit->At(x[i]);
      residuals.push_back(std::abs(y[i] - predicted));
    }
    std::nth_element(residuals.begin(),
                     residuals.begin() + static_cast<std::ptrdiff_t>(residuals.size() / 2),
                     residuals.end());
    t.models.push_back({log_scale, *fit, residuals[residuals.size() / 2]});
  }
  return t;
}

Forecast ForecastToLimit(const TrendFit& t, std::optional<double> limit,
                         const ReportOptions& options) {
  Forecast f;
  if (!limit) return f;  // kNoLimit
  f.fitted_hours = t.fitted_hours;
  struct Projected {
    const GrowthModel* model;
    estimators::LimitForecast projection;
  };
  std::vector<Projected> projected;
  const double horizon_h = static_cast<double>(options.horizon_ns) / 3.6e12;
  for (const auto& m : t.models) {
    if (m.log_scale && !(*limit > 0.0)) continue;
    auto scale = [&](double v) { return m.log_scale ? std::log(v) : v; };
    projected.push_back({&m, estimators::ProjectToLimit(m.fit, scale(*limit), 0.0,
                                                        scale(t.last_value), horizon_h)});
  }
  if (projected.empty()) {
    f.kind = Forecast::Kind::kTooLittleData;
    return f;
  }
  const Projected& best =
      *std::min_element(projected.begin(), projected.end(), [](const auto& a, const auto& b) {
        return a.model->median_abs_residual < b.model->median_abs_residual;
      });
  f.log_scale = best.model->log_scale;
  f.per_day = f.log_scale ? std::expm1(best.model->fit.slope * 24.0) : best.model->fit.slope * 24.0;
  switch (best.projection.kind) {
    case estimators::LimitForecast::Kind::kAlreadyBeyond:
      f.kind = Forecast::Kind::kAlreadyBeyond;
      return f;
    case estimators::LimitForecast::Kind::kNotHeading:
      f.kind = Forecast::Kind::kNotHeading;
      return f;
    case estimators::LimitForecast::Kind::kHeading:
      break;
  }
  f.kind = Forecast::Kind::kHeading;
  double earliest = best.projection.earliest_x, latest = best.projection.latest_x;
  for (const auto& p : projected) {
    if (p.projection.kind != estimators::LimitForecast::Kind::kHeading) continue;
    earliest = std::min(earliest, p.projection.earliest_x);
    latest = std::max(latest, p.projection.latest_x);
  }
  f.earliest_ns = ToNs(earliest, options.to_ns);
  f.likely_ns = ToNs(best.projection.likely_x, options.to_ns);
  if (std::isfinite(latest) && latest <= horizon_h) f.latest_ns = ToNs(latest, options.to_ns);
  return f;
}

// Limits the alarm events showed: the limit of the latest event into each state.
std::map<std::pair<std::string, std::string>, MeasureLimits> LimitsFromEvents(
    const std::vector<storage::AlarmEventRecord>& events) {
  std::map<std::pair<std::string, std::string>, MeasureLimits> out;
  for (const auto& e : events) {
    if (!e.limit) continue;
    auto& l = out[{e.point_id, e.measure}];
    if (e.to_state == "alert") l.alert = *e.limit;
    if (e.to_state == "danger") l.danger = *e.limit;
    l.source = "alarm events";
  }
  return out;
}

}  // namespace

Status ReportOptions::Validate() const {
  if (to_ns <= from_ns)
    return Status::Fail("to (--to) must be after from (--from): the period is empty");
  if (current_window_ns <= 0)
    return Status::Fail("current_window (--current-window) must be positive");
  if (fit_window_ns < kReportHourNs)
    return Status::Fail("fit_window (--fit-window) must be at least 1 h");
  if (horizon_ns <= 0) return Status::Fail("horizon (--horizon) must be positive");
  if (min_fit_hours < 3) return Status::Fail("min_fit_hours must be at least 3");
  if (!(confidence > 0.5 && confidence < 1.0)) {
    return Status::Fail("confidence must be in (0.5, 1)");
  }
  if (top_points < 0) return Status::Fail("top_points must not be negative");
  return Status::Ok();
}

std::optional<double> PointReview::Completeness() const {
  if (expected <= 0) return std::nullopt;
  return static_cast<double>(received) / static_cast<double>(expected);
}

const MeasureReview* PointReview::Key() const {
  for (const auto& m : measures) {
    if (m.measure.name == key_measure) return &m;
  }
  return nullptr;
}

const MeasureReview* PointReview::Soonest(bool danger) const {
  const MeasureReview* best = nullptr;
  auto urgency = [&](const MeasureReview& m) {
    const Forecast& f = danger ? m.danger : m.alert;
    switch (f.kind) {
      case Forecast::Kind::kAlreadyBeyond:
        return static_cast<double>(INT64_MIN);
      case Forecast::Kind::kHeading:
        return static_cast<double>(f.likely_ns);
      case Forecast::Kind::kNotHeading:
        return 1e30;
      case Forecast::Kind::kTooLittleData:
        return 2e30;
      case Forecast::Kind::kNoLimit:
        return 3e30;
    }
    return 3e30;
  };
  for (const auto& m : measures) {
    if ((danger ? m.limits.danger : m.limits.alert) && (!best || urgency(m) < urgency(*best))) {
      best = &m;
    }
  }
  return best;
}

Result<ReportModel> BuildReport(storage::ReportReader& reader, BaselineProvider& baseline,
                                const SiteFacts& site, const ReportOptions& options) {
  if (Status s = options.Validate(); !s.ok()) return s;
  ReportModel model;
  model.options = options;
  // Whole hours: roll-up buckets are whole hours, and a half-filled hour would look incomplete.
  const std::int64_t from =
      options.from_ns - ((options.from_ns % kReportHourNs) + kReportHourNs) % kReportHourNs;
  const std::int64_t to = options.to_ns;
  const std::int64_t current_from = std::max(from, to - options.current_window_ns);
  const std::int64_t week_from = current_from - 7 * kReportDayNs;
  const std::int64_t read_from = std::min({from, week_from, to - options.fit_window_ns});

  auto measures = reader.Measures();
  if (!measures) return measures.status();
  auto states = reader.States();
  if (!states) return states.status();
  auto events = reader.Events(from, to);
  if (!events) return events.status();
  auto acks = reader.Acknowledgements(from, to);
  if (!acks) return acks.status();
  // Limits: the site file's first, else what the stored events (of all time) crossed.
  auto all_events = reader.Events(std::numeric_limits<std::int64_t>::min(), to);
  if (!all_events) return all_events.status();
  const auto event_limits = LimitsFromEvents(*all_events);

  std::map<std::pair<std::string, std::string>, std::string> state_of;
  for (const auto& s : *states) state_of[{s.point_id, s.measure}] = s.state;

  std::map<std::string, PointReview> points;
  std::set<std::string> asked(options.points.begin(), options.points.end());
  for (const auto& measure : *measures) {
    const auto machine = site.machine_of_point.find(measure.point_id);
    if (!options.machine.empty() &&
        (machine == site.machine_of_point.end() || machine->second != options.machine)) {
      continue;
    }
    PointReview& point = points[measure.point_id];
    point.point_id = measure.point_id;
    if (machine != site.machine_of_point.end()) point.machine = machine->second;

    MeasureReview m;
    m.measure = measure;
    if (auto s = state_of.find({measure.point_id, measure.name}); s != state_of.end()) {
      m.state = s->second;
    }
    auto rows = reader.Hourly(measure.measure_pk, read_from, to);
    if (!rows) return rows.status();
    m.current = MedianOfMeans(*rows, current_from, to);
    m.week = MedianOfMeans(*rows, week_from, current_from);
    auto level = baseline.Level(reader, measure, current_from);
    if (!level) return level.status();
    if (level->has_value()) {
      m.baseline = (*level)->value;
      m.baseline_source = (*level)->source;
    }
    m.vs_baseline_db = ChangeDb(m.current, m.baseline);
    m.vs_week_db = ChangeDb(m.current, m.week);
    if (auto l = site.limits.find({measure.point_id, measure.name}); l != site.limits.end()) {
      m.limits = l->second;
    } else if (auto e = event_limits.find({measure.point_id, measure.name});
               e != event_limits.end()) {
      m.limits = e->second;
    }
    if (m.limits.alert || m.limits.danger) {
      auto trend = FitTrend(reader, measure.measure_pk, *rows, options);
      if (!trend) return trend.status();
      m.alert = ForecastToLimit(*trend, m.limits.alert, options);
      m.danger = ForecastToLimit(*trend, m.limits.danger, options);
    }

    // Completeness: intervals received in the whole hours of the period against the point's usual
    // count per hour (the median over hours with data, this period and the week before).
    std::vector<std::int64_t> per_hour;
    std::int64_t received = 0, faults = 0, first_hour = -1;
    const std::int64_t last_whole = to - to % kReportHourNs;
    for (const auto& r : *rows) {
      if (r.count + r.fault_count > 0) per_hour.push_back(r.count + r.fault_count);
      if (r.start_ns >= from && r.start_ns < to) m.hours.push_back(r);
      if (r.start_ns >= from && r.start_ns < last_whole) {
        received += r.count + r.fault_count;
        faults += r.fault_count;
        if (first_hour < 0) first_hour = r.start_ns;
      }
    }
    if (!per_hour.empty() && first_hour >= 0 && received >= point.received) {
      std::sort(per_hour.begin(), per_hour.end());
      const std::int64_t usual = per_hour[per_hour.size() / 2];
      // A point commissioned during the period is expected from its first hour on.
      auto first_ever = reader.FirstHour(measure.measure_pk);
      if (!first_ever) return first_ever.status();
      const std::int64_t start = std::max(from, first_ever->value_or(from));
      point.received = received;
      point.fault_intervals = faults;
      point.expected = std::max<std::int64_t>(0, (last_whole - start) / kReportHourNs) * usual;
    }
    if (AlarmStateSeverity(m.state) > AlarmStateSeverity(point.state)) point.state = m.state;
    if (measure.kind == "band") {
      const double move =
          std::max(std::abs(m.vs_baseline_db.value_or(0.0)), std::abs(m.vs_week_db.value_or(0.0)));
      if (point.key_measure.empty() || move > point.score_db) {
        point.score_db = move;
        point.key_measure = measure.name;
      }
    }
    point.measures.push_back(std::move(m));
  }

  for (auto& [id, point] : points) {
    if (point.key_measure.empty() && !point.measures.empty()) {
      point.key_measure = point.measures.front().measure.name;
    }
    if (auto s = site.speed_rpm_of_point.find(id); s != site.speed_rpm_of_point.end()) {
      point.speed_rpm = s->second;
    }
    if (auto d = site.defect_lines_of_point.find(id); d != site.defect_lines_of_point.end()) {
      point.defect_lines = d->second;
    }
    for (const auto& e : *events) {
      if (e.point_id == id) point.events.push_back(e);
    }
    for (const auto& a : *acks) {
      if (a.point_id == id) point.acks.push_back(a);
    }
  }

  for (auto& [id, point] : points) model.points.push_back(std::move(point));
  std::stable_sort(
      model.points.begin(), model.points.end(),
      [](const PointReview& a, const PointReview& b) { return a.score_db > b.score_db; });
  int ranked_shown = 0;
  for (auto& point : model.points) {
    if (asked.count(point.point_id)) {
      point.why_detailed = "asked for";
    } else if (AlarmStateSeverity(point.state) >= kSeverityNeedsAttention) {
      point.why_detailed = "in " + point.state;
    } else if (!point.events.empty()) {
      point.why_detailed = "alarm events in the period";
    } else if (ranked_shown < options.top_points && point.score_db >= 1.0) {
      point.why_detailed = "ranked high";  // moved at least 1 dB: below that is scatter
      ++ranked_shown;
    }
    model.points_by_state[point.state]++;
    model.received += point.received;
    model.expected += point.expected;
  }
  auto included = [&](const std::string& id) {
    return std::any_of(model.points.begin(), model.points.end(),
                       [&](const PointReview& p) { return p.point_id == id; });
  };
  for (const auto& e : *events) {
    if (!included(e.point_id)) continue;
    if (e.to_state == "alert" || e.to_state == "danger") ++model.alarms_raised;
    if (e.to_state == "normal") ++model.alarms_cleared;
    if (e.to_state == "sensor_fault") ++model.sensor_fault_events;
    model.events.push_back(e);
  }
  for (const auto& a : *acks) {
    if (included(a.point_id)) model.acks.push_back(a);
  }
  // Spectra only for the points shown in detail: they are the largest rows read.
  for (auto& point : model.points) {
    if (point.why_detailed.empty()) continue;
    auto latest = reader.SpectrumBefore(point.point_id, to);
    if (!latest) return latest.status();
    point.latest_spectrum = std::move(*latest);
    auto base = baseline.Spectrum(reader, point.point_id);
    if (!base) return base.status();
    point.baseline_spectrum = std::move(*base);
  }
  return model;
}

}  // namespace spinward::daemon
