// Robust statistics of a measure's values in good condition, and statistical alarm limits from
// them: the median and the median absolute deviation (MAD), scaled by 1.4826 so that it estimates
// the standard deviation of normally distributed values (1 / Phi^-1(3/4); Rousseeuw & Croux 1993).
// A few outliers (a start-up, a wash-down) move neither, unlike the mean and standard deviation.
// Thread-safety: pure functions.
#pragma once

#include <cstddef>
#include <span>

#include "spinward/estimators/result.h"

namespace spinward::estimators {

inline constexpr double kMadToSigma = 1.4826;

struct RobustStats {
  double median = 0.0;
  double mad = 0.0;  // scaled by kMadToSigma
  std::size_t count = 0;
};

// Rejects an empty span and non-finite values. The median of an even count is the mean of the two
// middle values (as numpy.median).
Result<RobustStats> ComputeRobustStats(std::span<const double> values);

struct StatisticalLimits {
  double alert = 0.0;
  double danger = 0.0;
};

// alert = median + k_alert * spread, danger = median + k_danger * spread, where spread is the
// scaled MAD but at least min_spread_fraction * |median| (values that barely vary, a MAD of 0,
// would otherwise put the limits on top of the median). Defaults k 3 and 6, floor 5 %: common
// practice, no source.
struct LimitRule {
  double k_alert = 3.0;
  double k_danger = 6.0;
  double min_spread_fraction = 0.05;
};
StatisticalLimits LimitsFrom(const RobustStats& stats, const LimitRule& rule = {});

}  // namespace spinward::estimators
