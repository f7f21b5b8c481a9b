// Time-to-limit forecasts for slowly worsening trends: a robust straight-line fit (Theil-Sen) with
// a confidence range on its slope, and the projection of that line to an alert or danger limit.
//
// Theil-Sen (Theil 1950; Sen 1968, "Estimates of the regression coefficient based on Kendall's
// tau", JASA 63) takes the slope as the median of the slopes between all pairs of points, so a few
// outliers (a sensor spike, a restart transient) barely move it: up to about 29 % of the points may
// be wild. Its slope confidence range is Sen's distribution-free one from Kendall's tau. The
// intercept follows scipy.stats.theilslopes' default ("separate"): median(y) - slope median(x).
// Cost: O(n^2) pairs in time and memory (ranks are selected, not sorted); callers fit hourly means
// (168 points for a week), not raw minutes. Thread-safety: plain values and pure functions.
#pragma once

#include <cstddef>
#include <span>

#include "spinward/estimators/result.h"

namespace spinward::estimators {

struct TheilSenFit {
  double slope = 0.0;       // y units per x unit: the median pairwise slope
  double intercept = 0.0;   // median(y) - slope * median(x)
  double low_slope = 0.0;   // lower end of the slope's confidence range
  double high_slope = 0.0;  // upper end
  double median_x = 0.0;    // the pivot: the fitted line passes through (median_x, median_y)
  double median_y = 0.0;
  std::size_t pairs = 0;  // pairs with distinct x that the slope is the median of

  double At(double x) const { return intercept + slope * x; }
};

// Fits y against x (same length, at least 3 points, at least two distinct x, all finite).
// confidence in (0, 1), e.g. 0.95; like SciPy, 0.05 and 0.95 both mean the 95 % range.
Result<TheilSenFit> FitTheilSen(std::span<const double> x, std::span<const double> y,
                                double confidence = 0.95);

// Where an upward trend meets a limit.
struct LimitForecast {
  enum class Kind {
    kAlreadyBeyond,  // the current value is at or above the limit
    kHeading,        // rising: reaches the limit at `likely_x`, range [earliest_x, latest_x]
    kNotHeading,     // flat or falling, or the likely crossing lies beyond the horizon
  };
  Kind kind = Kind::kNotHeading;
  double earliest_x = 0.0;  // from the steepest slope in the range, never before now
  double likely_x = 0.0;    // from the median slope
  double latest_x = 0.0;    // from the shallowest slope; +infinity when that slope is not rising
};

// Projects the fitted line from its pivot to `limit`. `now_x` is the time of the forecast,
// `current_value` the value the caller takes as today's (e.g. the latest hourly mean), `horizon`
// how far after now_x a crossing still counts (beyond it: kNotHeading).
LimitForecast ProjectToLimit(const TheilSenFit& fit, double limit, double now_x,
                             double current_value, double horizon);

// The standard normal quantile (inverse CDF) of p in (0, 1), to about 1e-12.
double NormalQuantile(double p);

}  // namespace spinward::estimators
