// Coordinates are written with one decimal: enough for a 760-pixel chart, and it keeps a report of
// hundreds of charts small. Long series are thinned to the min and max of each pixel column, so a
// spike survives the thinning.
#include "svg_chart.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ctime>
#include <limits>

namespace spinward::daemon {
namespace {

constexpr double kLeft = 64, kRight = 16, kTop = 28, kBottom = 44;

std::string Num(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.1f", v);
  return buf;
}

std::string TickText(double v, double step) {
  char buf[32];
  const int decimals = step >= 1 ? 0 : static_cast<int>(std::ceil(-std::log10(step) - 1e-9));
  std::snprintf(buf, sizeof buf, "%.*f", std::min(decimals, 6), v);
  return buf;
}

std::string TimeText(double seconds, bool with_date, bool with_time) {
  const std::time_t t = static_cast<std::time_t>(std::llround(seconds));
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  if (with_date && with_time) {
    std::strftime(buf, sizeof buf, "%m-%d %H:%M", &tm);
  } else if (with_date) {
    std::strftime(buf, sizeof buf, "%Y-%m-%d", &tm);
  } else {
    std::strftime(buf, sizeof buf, "%H:%M", &tm);
  }
  return buf;
}

struct Axis {
  double lo, hi;
  bool log;
  double pixel_lo, pixel_hi;
  double Map(double v) const {
    const double a = log ? std::log10(lo) : lo, b = log ? std::log10(hi) : hi;
    const double u = log ? std::log10(v) : v;
    return pixel_lo + (u - a) / (b - a) * (pixel_hi - pixel_lo);
  }
};

}  // namespace

std::string EscapeXml(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&#39;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

double NiceStep(double span, int target) {
  if (!(span > 0) || target < 1) return 1.0;
  const double raw = span / target;
  const double magnitude = std::pow(10.0, std::floor(std::log10(raw)));
  const double f = raw / magnitude;
  const double nice = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
  return nice * magnitude;
}

std::string RenderSvgChart(const ChartSpec& spec) {
  const double w = spec.width, h = spec.height;
  // Data ranges.
  double x_lo = spec.x_min, x_hi = spec.x_max;
  double y_lo = std::numeric_limits<double>::infinity(), y_hi = -y_lo;
  const bool x_from_data = !(x_hi > x_lo);
  if (x_from_data) {
    x_lo = std::numeric_limits<double>::infinity();
    x_hi = -x_lo;
  }
  for (const auto& s : spec.series) {
    for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
      if (!std::isfinite(s.y[i])) continue;
      if (!x_from_data && (s.x[i] < x_lo || s.x[i] > x_hi)) continue;
      if (spec.y_log && !(s.y[i] > 0)) continue;
      if (x_from_data) {
        x_lo = std::min(x_lo, s.x[i]);
        x_hi = std::max(x_hi, s.x[i]);
      }
      y_lo = std::min(y_lo, s.y[i]);
      y_hi = std::max(y_hi, s.y[i]);
    }
  }
  for (const auto& l : spec.lines) {
    if (std::isfinite(l.value) && (!spec.y_log || l.value > 0)) {
      y_lo = std::min(y_lo, l.value);
      y_hi = std::max(y_hi, l.value);
    }
  }
  const bool empty = !(std::isfinite(x_lo) && std::isfinite(y_lo));
  if (empty) {
    x_lo = 0, x_hi = 1, y_lo = spec.y_log ? 1 : 0, y_hi = spec.y_log ? 10 : 1;
  }
  if (!(x_hi > x_lo)) x_hi = x_lo + 1;
  if (spec.y_log) {
    y_lo = std::pow(10.0, std::floor(std::log10(y_lo)));
    y_hi = std::pow(10.0, std::ceil(std::log10(y_hi)));
    if (!(y_hi > y_lo)) y_hi = y_lo * 10;
  } else {
    if (!spec.lines.empty() || y_lo > 0) y_lo = std::min(y_lo, 0.0);  // levels read from zero
    if (!(y_hi > y_lo)) y_hi = y_lo + 1;
    const double step = NiceStep(y_hi - y_lo, 5);
    y_lo = std::floor(y_lo / step) * step;
    y_hi = std::ceil(y_hi * 1.05 / step) * step;
  }
  const Axis ax{x_lo, x_hi, false, kLeft, w - kRight};
  const Axis ay{y_lo, y_hi, spec.y_log, h - kBottom, kTop};

  std::string out = "<svg class=\"chart " + EscapeXml(spec.css_class) + "\" data-point=\"" +
                    EscapeXml(spec.data_point) + "\" width=\"" + Num(w) + "\" height=\"" + Num(h) +
                    "\" viewBox=\"0 0 " + Num(w) + " " + Num(h) + "\" role=\"img\" aria-label=\"" +
                    EscapeXml(spec.title) + "\">\n";
  out += "<title>" + EscapeXml(spec.title) + "</title>\n";
  out += "<rect class=\"plot\" x=\"" + Num(kLeft) + "\" y=\"" + Num(kTop) + "\" width=\"" +
         Num(w - kLeft - kRight) + "\" height=\"" + Num(h - kTop - kBottom) + "\"/>\n";
  out += "<text class=\"chart-title\" x=\"" + Num(kLeft) + "\" y=\"16\">" + EscapeXml(spec.title) +
         "</text>\n";

  // Y ticks and grid.
  out += "<g class=\"y-axis\">";
  if (spec.y_log) {
    for (double v = y_lo; v <= y_hi * 1.0001; v *= 10) {
      const double py = ay.Map(v);
      char buf[32];
      std::snprintf(buf, sizeof buf, "%.0e", v);
      out += "<line class=\"grid\" x1=\"" + Num(kLeft) + "\" x2=\"" + Num(w - kRight) + "\" y1=\"" +
             Num(py) + "\" y2=\"" + Num(py) + "\"/><text class=\"tick\" x=\"" + Num(kLeft - 4) +
             "\" y=\"" + Num(py + 4) + "\" text-anchor=\"end\">" + buf + "</text>";
    }
  } else {
    const double step = NiceStep(y_hi - y_lo, 5);
    for (double v = y_lo; v <= y_hi + step * 1e-6; v += step) {
      const double py = ay.Map(v);
      out += "<line class=\"grid\" x1=\"" + Num(kLeft) + "\" x2=\"" + Num(w - kRight) + "\" y1=\"" +
             Num(py) + "\" y2=\"" + Num(py) + "\"/><text class=\"tick\" x=\"" + Num(kLeft - 4) +
             "\" y=\"" + Num(py + 4) + "\" text-anchor=\"end\">" + TickText(v, step) + "</text>";
    }
  }
  out += "</g>\n";

  // X ticks.
  out += "<g class=\"x-axis\">";
  if (spec.x_is_time) {
    const double span = x_hi - x_lo;
    const double steps[] = {3600,  2 * 3600,  3 * 3600,  6 * 3600,   12 * 3600,
                            86400, 2 * 86400, 7 * 86400, 14 * 86400, 28 * 86400};
    double step = steps[std::size(steps) - 1];
    for (double s : steps) {
      if (span / s <= 7) {
        step = s;
        break;
      }
    }
    const bool days = step >= 86400;
    for (double v = std::ceil(x_lo / step) * step; v <= x_hi; v += step) {
      const double px = ax.Map(v);
      out += "<line class=\"grid\" x1=\"" + Num(px) + "\" x2=\"" + Num(px) + "\" y1=\"" +
             Num(kTop) + "\" y2=\"" + Num(h - kBottom) + "\"/><text class=\"tick\" x=\"" + Num(px) +
             "\" y=\"" + Num(h - kBottom + 14) + "\" text-anchor=\"middle\">" +
             TimeText(v, true, !days) + "</text>";
    }
  } else {
    const double step = NiceStep(x_hi - x_lo, 8);
    for (double v = std::ceil(x_lo / step) * step; v <= x_hi + step * 1e-6; v += step) {
      const double px = ax.Map(v);
      out += "<line class=\"grid\" x1=\"" + Num(px) + "\" x2=\"" + Num(px) + "\" y1=\"" +
             Num(kTop) + "\" y2=\"" + Num(h - kBottom) + "\"/><text class=\"tick\" x=\"" + Num(px) +
             "\" y=\"" + Num(h - kBottom + 14) + "\" text-anchor=\"middle\">" + TickText(v, step) +
             "</text>";
    }
  }
  out += "</g>\n";
  out += "<text class=\"axis-title\" x=\"" + Num((kLeft + w - kRight) / 2) + "\" y=\"" +
         Num(h - 8) + "\" text-anchor=\"middle\">" + EscapeXml(spec.x_title) + "</text>\n";
  out += "<text class=\"axis-title\" transform=\"translate(14 " + Num((kTop + h - kBottom) / 2) +
         ") rotate(-90)\" text-anchor=\"middle\">" + EscapeXml(spec.y_title) + "</text>\n";

  // Series, thinned to min/max per pixel column.
  const int columns = static_cast<int>(w - kLeft - kRight);
  for (const auto& s : spec.series) {
    std::string points;
    int column = -1;
    double col_min = 0, col_max = 0, col_x = 0;
    bool pen_down = false;
    auto flush = [&] {
      if (column < 0) return;
      points += Num(col_x) + "," + Num(ay.Map(col_max)) + " ";
      if (col_min != col_max) points += Num(col_x) + "," + Num(ay.Map(col_min)) + " ";
    };
    std::string paths;
    auto end_line = [&] {
      flush();
      if (!points.empty()) {
        paths +=
            "<polyline class=\"series " + EscapeXml(s.css_class) + "\" points=\"" + points + "\"/>";
      }
      points.clear();
      column = -1;
    };
    for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
      const double y = s.y[i];
      if (s.x[i] < x_lo || s.x[i] > x_hi) continue;
      if (!std::isfinite(y) || (spec.y_log && !(y > 0))) {
        if (pen_down) end_line();
        pen_down = false;
        continue;
      }
      pen_down = true;
      const double px = ax.Map(s.x[i]);
      const int c = std::clamp(static_cast<int>(px - kLeft), 0, columns);
      if (c != column) {
        flush();
        column = c;
        col_x = px;
        col_min = col_max = y;
      } else {
        col_min = std::min(col_min, y);
        col_max = std::max(col_max, y);
      }
    }
    end_line();
    out += "<g class=\"series-group\"><title>" + EscapeXml(s.label) + "</title>" + paths + "</g>\n";
  }

  // Limit lines and marks.
  for (const auto& l : spec.lines) {
    if (!std::isfinite(l.value) || (spec.y_log && !(l.value > 0))) continue;
    const double py = ay.Map(l.value);
    out += "<g class=\"limit " + EscapeXml(l.css_class) + "\"><line x1=\"" + Num(kLeft) +
           "\" x2=\"" + Num(w - kRight) + "\" y1=\"" + Num(py) + "\" y2=\"" + Num(py) +
           "\"/><text x=\"" + Num(w - kRight - 4) + "\" y=\"" + Num(py - 4) +
           "\" text-anchor=\"end\">" + EscapeXml(l.label) + "</text></g>\n";
  }
  for (const auto& m : spec.marks) {
    if (m.x < x_lo || m.x > x_hi) continue;
    const double px = ax.Map(m.x);
    out += "<g class=\"mark " + EscapeXml(m.css_class) + "\"><title>" + EscapeXml(m.label) +
           "</title><line x1=\"" + Num(px) + "\" x2=\"" + Num(px) + "\" y1=\"" + Num(kTop) +
           "\" y2=\"" + Num(h - kBottom) + "\"/><text x=\"" + Num(px + 2) + "\" y=\"" +
           Num(kTop + 10) + "\">" + EscapeXml(m.label) + "</text></g>\n";
  }
  if (empty) {
    out += "<text class=\"no-data\" x=\"" + Num((kLeft + w - kRight) / 2) + "\" y=\"" + Num(h / 2) +
           "\" text-anchor=\"middle\">no data in the period</text>\n";
  }
  out += "</svg>\n";
  return out;
}

}  // namespace spinward::daemon
