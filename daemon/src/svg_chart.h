// Inline SVG line charts for the report: one or more series on linear or log axes, horizontal
// lines (limits), vertical marks (alarm events, acknowledgements, shaft harmonics, bearing defect
// frequencies), axis titles with units, tick labels at "nice" steps (Heckbert, "Nice numbers for
// graph labels", Graphics Gems 1990) or at whole hours and days for time axes. Pure text output:
// no script, no external reference, so the report opens offline and can be mailed.
// Thread-safety: pure functions.
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace spinward::daemon {

struct ChartSeries {
  std::vector<double> x, y;  // NaN y values break the line
  std::string label;
  std::string css_class;  // stroke colour comes from the page's style sheet
};

struct ChartLine {  // horizontal, at y = value
  double value = 0.0;
  std::string label;
  std::string css_class;
};

struct ChartMark {  // vertical, at x
  double x = 0.0;
  std::string label;
  std::string css_class;
};

struct ChartSpec {
  std::string css_class;   // on the <svg>, e.g. "trend-chart"
  std::string data_point;  // data-point attribute, to find a point's charts
  std::string title;
  std::string x_title;     // with unit, e.g. "time (UTC)" or "frequency (Hz)"
  std::string y_title;     // with unit, e.g. "velocity_rms_10_1000 (mm/s)"
  bool x_is_time = false;  // x in seconds since the epoch; ticks as UTC dates and times
  bool y_log = false;
  std::vector<ChartSeries> series;
  std::vector<ChartLine> lines;
  std::vector<ChartMark> marks;
  double x_min = 0.0, x_max = 0.0;  // equal: from the data
  int width = 760, height = 280;
};

std::string RenderSvgChart(const ChartSpec& spec);

// Escapes &, <, >, " and ' for HTML and SVG text and attributes.
std::string EscapeXml(std::string_view text);

// Step for about `target` ticks over span: 1, 2 or 5 x 10^k (Heckbert's nice numbers).
double NiceStep(double span, int target);

}  // namespace spinward::daemon
