// Median, scaled MAD and the statistical limits from them, against values worked by hand and
// against numpy/scipy (scipy.stats.median_abs_deviation with scale='normal').
#include "spinward/estimators/robust_stats.h"

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace spinward::estimators {
namespace {

TEST(RobustStats, HandComputedMedianAndMad) {
  // Nine interval values of a velocity band (mm/s), one a start-up spike:
  // sorted 1.8 1.9 2.0 2.0 2.1 2.2 2.3 2.4 9.5 -> median 2.1 (the 5th).
  // |x - 2.1| sorted: 0 0.1 0.1 0.1 0.2 0.2 0.3 0.3 7.4 -> MAD 0.2 (the 5th);
  // scaled: 0.2 x 1.4826 = 0.29652. By hand.
  const std::vector<double> v{2.0, 2.2, 1.9, 9.5, 2.1, 2.3, 2.0, 1.8, 2.4};
  Result<RobustStats> s = ComputeRobustStats(v);
  ASSERT_TRUE(s.ok()) << s.message();
  EXPECT_EQ(s->count, 9u);
  EXPECT_NEAR(s->median, 2.1, 1e-12);
  EXPECT_NEAR(s->mad, 0.29652, 1e-12);
  // Limits: 2.1 + 3 x 0.29652 = 2.98956 and 2.1 + 6 x 0.29652 = 3.87912 (by hand); the spike
  // moved neither (the mean would be 2.91, above the alert limit from the other eight).
  StatisticalLimits limits = LimitsFrom(*s);
  EXPECT_NEAR(limits.alert, 2.98956, 1e-12);
  EXPECT_NEAR(limits.danger, 3.87912, 1e-12);
}

TEST(RobustStats, EvenCountTakesTheMeanOfTheMiddlePair) {
  // 1 2 3 10 -> median 2.5; |x - 2.5| = 1.5 0.5 0.5 7.5 -> sorted 0.5 0.5 1.5 7.5 -> MAD 1.0;
  // numpy.median and scipy.stats.median_abs_deviation(scale='normal') give 2.5 and 1.482602...
  // (scipy's normal scale is 1/0.67449 = 1.482602; we use 1.4826).
  const std::vector<double> v{3.0, 1.0, 10.0, 2.0};
  Result<RobustStats> s = ComputeRobustStats(v);
  ASSERT_TRUE(s.ok());
  EXPECT_NEAR(s->median, 2.5, 1e-12);
  EXPECT_NEAR(s->mad, 1.4826, 1e-12);
}

TEST(RobustStats, SteadyValuesGetTheSpreadFloor) {
  // All equal: MAD 0, so the spread is 5 % of the median: 4 -> alert 4.6, danger 5.2.
  const std::vector<double> v(20, 4.0);
  Result<RobustStats> s = ComputeRobustStats(v);
  ASSERT_TRUE(s.ok());
  EXPECT_EQ(s->mad, 0.0);
  StatisticalLimits limits = LimitsFrom(*s);
  EXPECT_NEAR(limits.alert, 4.6, 1e-12);
  EXPECT_NEAR(limits.danger, 5.2, 1e-12);
}

TEST(RobustStats, RejectsEmptyAndNonFinite) {
  EXPECT_FALSE(ComputeRobustStats(std::vector<double>{}).ok());
  EXPECT_FALSE(ComputeRobustStats(std::vector<double>{1.0, std::nan("")}).ok());
}

}  // namespace
}  // namespace spinward::estimators
