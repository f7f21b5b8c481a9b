// Theil-Sen fit and time-to-limit projection against hand-checkable lines and against
// scipy.stats.theilslopes (Debian's SciPy), which implements Sen (1968) with Theil (1950)'s slope.
#include "spinward/estimators/trend_forecast.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <limits>
#include <sstream>
#include <string>
#include <vector>

#include "support/test_paths.h"

namespace spinward::estimators {
namespace {

using ::testing::HasSubstr;

TEST(TheilSen, LineWithOutliersKeepsItsSlope) {
  // y = 2 + 0.5 x for x = 0..19, three points thrown far off. The 17 clean points make 136 of
  // the 190 pairs, each with slope exactly 0.5: more than half, so the median pairwise slope is
  // 0.5 exactly (the breakdown argument of Sen 1968). Least squares would be dragged off.
  std::vector<double> x, y;
  for (int i = 0; i < 20; ++i) {
    x.push_back(i);
    y.push_back(2.0 + 0.5 * i);
  }
  y[3] += 50.0;
  y[10] -= 40.0;
  y[17] += 30.0;
  auto fit = FitTheilSen(x, y);
  ASSERT_TRUE(fit.ok()) << fit.message();
  EXPECT_EQ(fit->slope, 0.5);
  EXPECT_EQ(fit->pairs, 190u);
  EXPECT_LE(fit->low_slope, 0.5);
  EXPECT_GE(fit->high_slope, 0.5);
  // Medians by hand: x 0..19 -> 9.5. y sorted: the clean values 2 + 0.5 i without i = 3, 10, 17
  // plus -18, 33.5, 40.5; the 10th and 11th of the 20 are 2 + 0.5*9 = 6.5 and 2 + 0.5*11 = 7.5
  // (i = 10 moved to the bottom), so median(y) = 7.0 and the intercept 7.0 - 0.5*9.5 = 2.25.
  EXPECT_DOUBLE_EQ(fit->median_x, 9.5);
  EXPECT_DOUBLE_EQ(fit->median_y, 7.0);
  EXPECT_DOUBLE_EQ(fit->intercept, 2.25);
}

TEST(TheilSen, NormalQuantileMatchesTables) {
  // Standard normal table values (e.g. Abramowitz & Stegun 26.2): 97.5 % -> 1.959964, 95 % ->
  // 1.644854, 50 % -> 0.
  EXPECT_NEAR(NormalQuantile(0.975), 1.959963985, 1e-8);
  EXPECT_NEAR(NormalQuantile(0.05), -1.644853627, 1e-8);
  EXPECT_NEAR(NormalQuantile(0.5), 0.0, 1e-12);
}

// A deterministic noisy series: a slow rise with scatter and spikes, as an hourly band trend.
void NoisySeries(std::vector<double>& x, std::vector<double>& y, int n) {
  unsigned state = 12345u;
  auto next = [&] {
    state = state * 1103515245u + 12345u;  // the C standard's example LCG
    return static_cast<double>((state >> 16) & 0x7fff) / 32767.0;
  };
  for (int i = 0; i < n; ++i) {
    x.push_back(i * 3600.0);
    double v = 1.8 + 2e-5 * i * 3600.0 + 0.3 * (next() - 0.5);
    if (i % 17 == 5) v += 2.0;                     // spikes
    if (i % 23 == 7) v = std::round(v * 10) / 10;  // some ties
    y.push_back(v);
  }
  x[4] = x[3];  // a tie in x, which Sen's variance corrects for
}

TEST(TheilSen, AgreesWithScipyTheilslopes) {
  std::vector<double> x, y;
  NoisySeries(x, y, 60);
  std::ostringstream xs, ys;
  xs.precision(17);
  ys.precision(17);
  for (std::size_t i = 0; i < x.size(); ++i) {
    xs << (i ? "," : "") << x[i];
    ys << (i ? "," : "") << y[i];
  }
  for (double confidence : {0.95, 0.90}) {
    const std::string script =
        "import scipy.stats as s; r = s.theilslopes([" + ys.str() + "], [" + xs.str() + "], " +
        std::to_string(confidence) +
        "); print('%.17g %.17g %.17g %.17g' % (r.slope, r.intercept, r.low_slope, r.high_slope))";
    const auto result = spinward::testing::RunCommand(spinward::testing::ReferencePython() +
                                                      " -c \"" + script + "\"");
    ASSERT_EQ(result.exit_code, 0) << result.output << result.error_output;
    std::istringstream in(result.output);
    double slope = 0, intercept = 0, low = 0, high = 0;
    in >> slope >> intercept >> low >> high;
    ASSERT_FALSE(in.fail()) << result.output;
    auto fit = FitTheilSen(x, y, confidence);
    ASSERT_TRUE(fit.ok()) << fit.message();
    EXPECT_NEAR(fit->slope, slope, 1e-12 * std::abs(slope));
    EXPECT_NEAR(fit->intercept, intercept, 1e-9 * std::abs(intercept));
    EXPECT_NEAR(fit->low_slope, low, 1e-12 * std::abs(low));
    EXPECT_NEAR(fit->high_slope, high, 1e-12 * std::abs(high));
    EXPECT_LT(fit->low_slope, fit->slope);
    EXPECT_GT(fit->high_slope, fit->slope);
  }
}

TEST(TheilSen, BadInputIsNamed) {
  std::vector<double> two{1, 2}, three{1, 2, 3}, same{5, 5, 5};
  EXPECT_THAT(FitTheilSen(two, two).message(), HasSubstr("need at least 3"));
  EXPECT_THAT(FitTheilSen(three, two).message(), HasSubstr("x has 3 values but y has 2"));
  EXPECT_THAT(FitTheilSen(same, three).message(), HasSubstr("all x are equal"));
  std::vector<double> bad{1, NAN, 3};
  EXPECT_THAT(FitTheilSen(three, bad).message(), HasSubstr("point 1 is not finite"));
  EXPECT_THAT(FitTheilSen(three, three, 1.0).message(), HasSubstr("confidence"));
}

TEST(LimitForecast, StraightLineReachesLimitWhereAlgebraSays) {
  // y = 1 + 0.1 t: reaches 4.5 at t = (4.5 - 1) / 0.1 = 35. A clean line has every pairwise
  // slope 0.1, so the range collapses onto the line.
  std::vector<double> t, y;
  for (int i = 0; i <= 20; ++i) {
    t.push_back(i);
    y.push_back(1.0 + 0.1 * i);
  }
  auto fit = FitTheilSen(t, y);
  ASSERT_TRUE(fit.ok());
  const LimitForecast f = ProjectToLimit(*fit, 4.5, 20.0, y.back(), 1000.0);
  ASSERT_EQ(f.kind, LimitForecast::Kind::kHeading);
  EXPECT_NEAR(f.likely_x, 35.0, 1e-9);
  EXPECT_NEAR(f.earliest_x, 35.0, 1e-9);
  EXPECT_NEAR(f.latest_x, 35.0, 1e-9);
  // Beyond the horizon (15 after now): not heading for the limit within it.
  EXPECT_EQ(ProjectToLimit(*fit, 4.5, 20.0, y.back(), 10.0).kind, LimitForecast::Kind::kNotHeading);
  // Already above the limit.
  EXPECT_EQ(ProjectToLimit(*fit, 2.5, 20.0, y.back(), 1000.0).kind,
            LimitForecast::Kind::kAlreadyBeyond);
}

TEST(LimitForecast, NoisyRiseGivesARangeAroundTheLikelyDate) {
  std::vector<double> x, y;
  NoisySeries(x, y, 60);
  auto fit = FitTheilSen(x, y);
  ASSERT_TRUE(fit.ok());
  const double now = x.back();
  const LimitForecast f = ProjectToLimit(*fit, 10.0, now, fit->At(now), 1e9);
  ASSERT_EQ(f.kind, LimitForecast::Kind::kHeading);
  // The range's ends come from the slope's ends: steeper reaches the limit sooner.
  EXPECT_LT(f.earliest_x, f.likely_x);
  EXPECT_LT(f.likely_x, f.latest_x);
  // By hand from the fit: the line through its pivot with the median slope.
  EXPECT_NEAR(f.likely_x, fit->median_x + (10.0 - fit->median_y) / fit->slope, 1e-6);
  EXPECT_NEAR(f.earliest_x, fit->median_x + (10.0 - fit->median_y) / fit->high_slope, 1e-6);
}

TEST(LimitForecast, FallingOrUncertainTrend) {
  std::vector<double> t{0, 1, 2, 3, 4}, down{5, 4.8, 4.9, 4.1, 4.0};
  auto fit = FitTheilSen(t, down);
  ASSERT_TRUE(fit.ok());
  EXPECT_EQ(ProjectToLimit(*fit, 7.1, 4, 4.0, 1e9).kind, LimitForecast::Kind::kNotHeading);
  // Rising on the median but with a range that includes falling: no latest date.
  std::vector<double> wobbly{1.0, 1.6, 0.9, 1.7, 1.2};
  auto rising = FitTheilSen(t, wobbly);
  ASSERT_TRUE(rising.ok());
  ASSERT_GT(rising->slope, 0.0);
  ASSERT_LE(rising->low_slope, 0.0);
  const LimitForecast f = ProjectToLimit(*rising, 3.0, 4, 1.2, 1e9);
  EXPECT_EQ(f.kind, LimitForecast::Kind::kHeading);
  EXPECT_TRUE(std::isinf(f.latest_x));
}

}  // namespace
}  // namespace spinward::estimators
