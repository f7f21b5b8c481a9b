// Turns a point and its profile into the estimator's options: the Welch settings at the point's
// sample rate, the number of segments that make one average from the profile's interval, and the
// point's bands. The site must have loaded without problems: these functions do not re-check it.
// Thread-safety: pure functions.
#pragma once

#include <cstddef>
#include <vector>

#include "spinward/config/site_config.h"
#include "spinward/estimators/band_integrator.h"
#include "spinward/estimators/streaming_welch.h"

namespace spinward::config {

// round(interval_s * sample_rate_hz / hop): the segments whose hops cover the interval. Returns 0
// when the interval is shorter than half a hop (the loader reports that; it never rounds it up).
std::size_t SegmentsPerAverage(double interval_s, double sample_rate_hz, std::size_t hop);

// The point's profile (the default ProfileConfig if the id is unknown, which a loaded site rules
// out) at the point's sample rate.
estimators::WelchOptions PointWelchOptions(const SiteConfig& site, const PointConfig& point);
estimators::WelchOptions ProfileWelchOptions(const ProfileConfig& profile, double sample_rate_hz);

}  // namespace spinward::config
