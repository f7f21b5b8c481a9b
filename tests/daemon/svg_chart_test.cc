// The report's SVG charts: tick steps by Heckbert's nice-number rule, escaping, and what a chart
// must carry (axis titles with units, limit lines, marks, no external reference).
#include "../../daemon/src/svg_chart.h"  // private to daemon/

#include <gtest/gtest.h>

#include <string>

namespace spinward::daemon {
namespace {

TEST(SvgChart, NiceStepFollowsHeckbert) {
  // Heckbert, "Nice numbers for graph labels" (Graphics Gems, 1990): the rough step span/target
  // is rounded to 1, 2, 5 or 10 x 10^k with thresholds 1.5, 3 and 7 on its leading fraction.
  EXPECT_DOUBLE_EQ(NiceStep(1.0, 5), 0.2);       // 0.2 -> f 2 -> 2
  EXPECT_DOUBLE_EQ(NiceStep(7.3, 5), 1.0);       // 1.46 -> 1
  EXPECT_DOUBLE_EQ(NiceStep(8.0, 5), 2.0);       // 1.6 -> 2
  EXPECT_DOUBLE_EQ(NiceStep(16.0, 5), 5.0);      // 3.2 -> 5
  EXPECT_DOUBLE_EQ(NiceStep(40.0, 5), 10.0);     // 8 -> 10
  EXPECT_DOUBLE_EQ(NiceStep(1200.0, 8), 200.0);  // 150 -> 1.5 x 100 -> 2
}

TEST(SvgChart, EscapesMarkup) {
  EXPECT_EQ(EscapeXml("a<b & \"c\" 'd'>"), "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;");
}

TEST(SvgChart, CarriesUnitsLimitsAndMarks) {
  ChartSpec spec;
  spec.css_class = "trend-chart";
  spec.data_point = "P101-DE-H";
  spec.title = "velocity <test>";
  spec.x_title = "time (UTC)";
  spec.y_title = "velocity (mm/s)";
  spec.x_is_time = true;
  ChartSeries s{{0, 3600, 7200}, {1.0, 2.0, 3.0}, "mean", "mean"};
  spec.series.push_back(s);
  spec.lines.push_back({2.8, "alert 2.8", "alert-limit"});
  spec.marks.push_back({3600, "alert", "event"});
  const std::string svg = RenderSvgChart(spec);
  EXPECT_EQ(svg.rfind("<svg class=\"chart trend-chart\" data-point=\"P101-DE-H\"", 0), 0u) << svg;
  EXPECT_NE(svg.find(">velocity (mm/s)</text>"), std::string::npos);
  EXPECT_NE(svg.find(">time (UTC)</text>"), std::string::npos);
  EXPECT_NE(svg.find("velocity &lt;test&gt;"), std::string::npos);
  EXPECT_NE(svg.find("class=\"limit alert-limit\""), std::string::npos);
  EXPECT_NE(svg.find("class=\"mark event\""), std::string::npos);
  EXPECT_NE(svg.find("<polyline class=\"series mean\""), std::string::npos);
  // Epoch 0 is 1970-01-01 00:00 UTC; hourly ticks over two hours print as "01-01 00:00" etc.
  EXPECT_NE(svg.find(">01-01 01:00<"), std::string::npos) << svg;
  EXPECT_EQ(svg.find("http"), std::string::npos);
  EXPECT_EQ(svg.find("href"), std::string::npos);
}

TEST(SvgChart, EmptyChartSaysSo) {
  ChartSpec spec;
  spec.y_title = "bearing (g)";
  const std::string svg = RenderSvgChart(spec);
  EXPECT_NE(svg.find("no data in the period"), std::string::npos);
}

}  // namespace
}  // namespace spinward::daemon
