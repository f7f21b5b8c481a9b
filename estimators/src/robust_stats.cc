#include "spinward/estimators/robust_stats.h"

#include <algorithm>
#include <cmath>
#include <vector>

namespace spinward::estimators {
namespace {

double MedianOf(std::vector<double>& v) {
  const std::size_t n = v.size();
  const std::size_t mid = n / 2;
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(mid), v.end());
  const double upper = v[mid];
  if (n % 2 == 1) return upper;
  const double lower = *std::max_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(mid));
  return (lower + upper) / 2.0;
}

}  // namespace

Result<RobustStats> ComputeRobustStats(std::span<const double> values) {
  if (values.empty()) return Error{"no values to learn from"};
  std::vector<double> v(values.begin(), values.end());
  for (double x : v) {
    if (!std::isfinite(x)) return Error{"a value to learn from is not finite"};
  }
  RobustStats stats;
  stats.count = v.size();
  stats.median = MedianOf(v);
  for (double& x : v) x = std::fabs(x - stats.median);
  stats.mad = kMadToSigma * MedianOf(v);
  return stats;
}

StatisticalLimits LimitsFrom(const RobustStats& stats, const LimitRule& rule) {
  const double spread = std::max(stats.mad, rule.min_spread_fraction * std::fabs(stats.median));
  return {stats.median + rule.k_alert * spread, stats.median + rule.k_danger * spread};
}

}  // namespace spinward::estimators
