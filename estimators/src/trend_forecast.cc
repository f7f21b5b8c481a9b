// Theil-Sen with Sen's (1968) slope confidence range, written to agree with
// scipy.stats.theilslopes: pairs with equal x are left out, the slope is the median of the
// pairwise slopes, the range's ranks come from the variance of Kendall's S corrected for ties in x
// and y (Sen's eq. 2.6), and ranks round half to even as numpy does.
#include "spinward/estimators/trend_forecast.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>
#include <vector>

namespace spinward::estimators {
namespace {

double Median(std::vector<double> v) {
  const std::size_t n = v.size();
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(n / 2), v.end());
  const double upper = v[n / 2];
  if (n % 2 == 1) return upper;
  const double lower = *std::max_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(n / 2));
  return 0.5 * (lower + upper);
}

// Sum over groups of equal values (of size k > 1) of k (k - 1) (2k + 5): the tie correction.
double TieTerm(std::span<const double> values) {
  std::vector<double> sorted(values.begin(), values.end());
  std::sort(sorted.begin(), sorted.end());
  double sum = 0.0;
  for (std::size_t i = 0; i < sorted.size();) {
    std::size_t j = i + 1;
    while (j < sorted.size() && sorted[j] == sorted[i]) ++j;
    const double k = static_cast<double>(j - i);
    if (k > 1) sum += k * (k - 1) * (2 * k + 5);
    i = j;
  }
  return sum;
}

long long RoundHalfEven(double v) { return static_cast<long long>(std::nearbyint(v)); }

}  // namespace

double NormalQuantile(double p) {
  // Bisection on the CDF written with erfc: slow but exact enough, and called once per fit.
  double lo = -40.0, hi = 40.0;
  for (int i = 0; i < 200; ++i) {
    const double mid = 0.5 * (lo + hi);
    const double cdf = 0.5 * std::erfc(-mid / std::sqrt(2.0));
    (cdf < p ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

Result<TheilSenFit> FitTheilSen(std::span<const double> x, std::span<const double> y,
                                double confidence) {
  if (x.size() != y.size()) {
    return Error{"theil-sen: x has " + std::to_string(x.size()) + " values but y has " +
                 std::to_string(y.size())};
  }
  if (x.size() < 3) {
    return Error{"theil-sen: " + std::to_string(x.size()) + " points, need at least 3"};
  }
  if (!(confidence > 0.0 && confidence < 1.0)) {
    return Error{"theil-sen: confidence " + std::to_string(confidence) + " must be in (0, 1)"};
  }
  for (std::size_t i = 0; i < x.size(); ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) {
      return Error{"theil-sen: point " + std::to_string(i) + " is not finite"};
    }
  }
  std::vector<double> slopes;
  slopes.reserve(x.size() * (x.size() - 1) / 2);
  for (std::size_t i = 0; i < x.size(); ++i) {
    for (std::size_t j = 0; j < x.size(); ++j) {
      const double dx = x[j] - x[i];
      if (dx > 0) slopes.push_back((y[j] - y[i]) / dx);
    }
  }
  if (slopes.empty()) return Error{"theil-sen: all x are equal, no slope"};
  // Only four ranks of the sorted slopes are needed: select them (O(N) each) instead of sorting.
  auto ranked = [&](std::size_t k) {
    std::nth_element(slopes.begin(), slopes.begin() + static_cast<std::ptrdiff_t>(k), slopes.end());
    return slopes[k];
  };

  TheilSenFit fit;
  fit.pairs = slopes.size();
  const std::size_t nt = slopes.size();
  fit.slope = nt % 2 == 1 ? ranked(nt / 2) : 0.5 * (ranked(nt / 2 - 1) + ranked(nt / 2));
  fit.median_x = Median({x.begin(), x.end()});
  fit.median_y = Median({y.begin(), y.end()});
  fit.intercept = fit.median_y - fit.slope * fit.median_x;

  const double a = confidence > 0.5 ? 1.0 - confidence : confidence;
  const double z = NormalQuantile(a / 2.0);  // negative, as in SciPy
  const double n = static_cast<double>(x.size());
  const double variance = (n * (n - 1) * (2 * n + 5) - TieTerm(x) - TieTerm(y)) / 18.0;
  const double sigma = std::sqrt(std::max(variance, 0.0));
  const double count = static_cast<double>(nt);
  const long long last = static_cast<long long>(nt) - 1;
  const long long upper = std::min(RoundHalfEven((count - z * sigma) / 2.0), last);
  const long long lower = std::max(RoundHalfEven((count + z * sigma) / 2.0) - 1, 0LL);
  fit.low_slope = ranked(static_cast<std::size_t>(std::clamp(lower, 0LL, last)));
  fit.high_slope = ranked(static_cast<std::size_t>(std::clamp(upper, 0LL, last)));
  return fit;
}

LimitForecast ProjectToLimit(const TheilSenFit& fit, double limit, double now_x,
                             double current_value, double horizon) {
  LimitForecast f;
  if (current_value >= limit) {
    f.kind = LimitForecast::Kind::kAlreadyBeyond;
    f.earliest_x = f.likely_x = f.latest_x = now_x;
    return f;
  }
  if (!(fit.slope > 0.0)) return f;  // flat or falling: kNotHeading
  // Each slope in the range pivots the line about (median_x, median_y), as the intercept does.
  auto crossing = [&](double slope) { return fit.median_x + (limit - fit.median_y) / slope; };
  f.likely_x = std::max(crossing(fit.slope), now_x);
  if (f.likely_x - now_x > horizon) return f;
  f.kind = LimitForecast::Kind::kHeading;
  f.earliest_x = fit.high_slope > 0.0 ? std::max(crossing(fit.high_slope), now_x) : now_x;
  f.latest_x = fit.low_slope > 0.0 ? std::max(crossing(fit.low_slope), now_x)
                                   : std::numeric_limits<double>::infinity();
  return f;
}

}  // namespace spinward::estimators
