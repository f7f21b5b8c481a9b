#include "spinward/config/point_options.h"

#include <cmath>

namespace spinward::config {

std::size_t SegmentsPerAverage(double interval_s, double sample_rate_hz, std::size_t hop) {
  if (hop == 0 || !(interval_s > 0.0) || !(sample_rate_hz > 0.0)) return 0;
  double segments = std::round(interval_s * sample_rate_hz / static_cast<double>(hop));
  if (!std::isfinite(segments) || segments < 1.0) return 0;
  return static_cast<std::size_t>(segments);
}

estimators::WelchOptions ProfileWelchOptions(const ProfileConfig& profile, double sample_rate_hz) {
  estimators::WelchOptions options;
  options.sample_rate_hz = sample_rate_hz;
  options.segment_length = profile.segment_length;
  options.overlap = profile.overlap;
  options.fft_length = profile.fft_length;
  options.window = profile.window;
  options.detrend = profile.detrend;
  options.averaging = profile.averaging;
  options.exponential_time_constant_s = profile.time_constant_s;
  std::size_t hop =
      profile.overlap < profile.segment_length ? profile.segment_length - profile.overlap : 0;
  options.segments_per_average = SegmentsPerAverage(profile.interval_s, sample_rate_hz, hop);
  return options;
}

estimators::WelchOptions PointWelchOptions(const SiteConfig& site, const PointConfig& point) {
  const ProfileConfig* profile = site.FindProfile(point.profile);
  return ProfileWelchOptions(profile != nullptr ? *profile : ProfileConfig{}, point.sample_rate_hz);
}

}  // namespace spinward::config
