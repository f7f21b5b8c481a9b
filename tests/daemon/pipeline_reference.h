// The records a channel pipeline must produce, computed from outside the pipeline: each record's
// spectrum from the batch estimator (estimators::Welch, itself checked against scipy.signal.welch
// in tests/estimators) over the samples of its segments, its indicators from one
// IndicatorAccumulator over the interval's samples, its band values from estimators::IntegrateBand,
// and its times from the protocol's rule "sample i was taken at first_sample_utc_ns + i * 1e9 /
// sample_rate_hz" (docs/protocol.md). Shared by the daemon tests that compare a pipeline, a router,
// the listeners or the drop directory against it.
#pragma once

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>
#include <span>
#include <string>
#include <vector>

#include "spinward/daemon/channel_pipeline.h"
#include "spinward/estimators/band_integrator.h"
#include "spinward/estimators/overall_indicators.h"
#include "spinward/estimators/streaming_welch.h"
#include "spinward/storage/measurement_record.h"

namespace spinward::daemon::testing {

// A gap-free stretch of samples: the pipeline restarts its segmenting (and ends its interval) at
// each piece.
struct Piece {
  std::vector<double> samples;
  std::int64_t first_ns = 0;
};

struct ExpectedRecord {
  estimators::AveragedSpectrum spectrum;
  std::size_t segment_count = 0;
  estimators::OverallIndicators indicators;
  std::vector<double> band_rms;
  // Times as a piece's first-sample time plus an offset in ns: a double cannot hold today's time
  // since 1970 to the nanosecond.
  std::int64_t start_base_ns = 0;
  double start_offset_ns = 0.0;
  std::int64_t end_base_ns = 0;
  double end_offset_ns = 0.0;
};

// A machine-like test signal: two shaft-order lines, a higher line, an offset and Gaussian noise,
// so every bin of the spectrum holds power (a relative comparison bin by bin is meaningful).
inline std::vector<double> TestSignal(std::size_t n, double fs, std::uint64_t seed,
                                      double scale = 1.0) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> noise(0.0, 0.3);
  std::vector<double> x(n);
  constexpr double kTwoPi = 6.283185307179586;
  for (std::size_t i = 0; i < n; ++i) {
    const double t = static_cast<double>(i) / fs;
    x[i] = scale *
           (0.05 + 1.0 * std::sin(kTwoPi * 24.7 * t) + 0.4 * std::sin(kTwoPi * 49.4 * t + 1.0) +
            0.2 * std::sin(kTwoPi * 0.31 * fs * t) + noise(rng));
  }
  return x;
}

// The reference for `pieces` fed in order to a pipeline with `settings`; `flush` adds the record
// that Flush makes of a partial interval.
inline std::vector<ExpectedRecord> ExpectedRecords(const std::vector<Piece>& pieces,
                                                   const PointSettings& settings, bool flush) {
  const std::size_t length = settings.welch.segment_length;
  const std::size_t hop = settings.welch.Hop();
  const std::size_t per_average = settings.welch.segments_per_average;
  const double fs = settings.sample_rate_hz;
  estimators::WelchOptions batch = settings.welch;
  batch.segments_per_average = 0;  // one average over the whole slice

  struct Segment {
    std::size_t piece, start;
  };
  std::vector<Segment> segments;
  std::vector<double> all;  // every sample, concatenated
  std::vector<std::size_t> offset;
  for (std::size_t p = 0; p < pieces.size(); ++p) {
    offset.push_back(all.size());
    const auto& x = pieces[p].samples;
    all.insert(all.end(), x.begin(), x.end());
    for (std::size_t s = 0; x.size() >= length && s + length <= x.size(); s += hop)
      segments.push_back({p, s});
  }
  auto piece_of = [&](std::size_t global) {
    std::size_t p = 0;
    while (p + 1 < pieces.size() && offset[p + 1] <= global) ++p;
    return p;
  };

  std::vector<ExpectedRecord> records;
  std::size_t previous_end = 0;  // global index where the last record's samples ended
  // The record's samples end at `end_global`, which is `end_local` samples into piece `end_piece`.
  auto make = [&](std::size_t first_segment, std::size_t count, std::size_t end_global,
                  std::size_t end_piece, std::size_t end_local) {
    ExpectedRecord r;
    r.segment_count = count;
    // Segments of one piece are consecutive: one batch Welch per piece, weighted by segment count.
    std::vector<double> sum;
    std::size_t k = first_segment;
    while (k < first_segment + count) {
      std::size_t j = k;
      while (j + 1 < first_segment + count && segments[j + 1].piece == segments[k].piece) ++j;
      const auto& x = pieces[segments[k].piece].samples;
      std::span<const double> slice(x.data() + segments[k].start,
                                    segments[j].start + length - segments[k].start);
      auto spectrum = estimators::Welch(slice, batch);
      EXPECT_TRUE(spectrum.ok()) << spectrum.message();
      const double weight = static_cast<double>(j - k + 1);
      if (k == first_segment && j + 1 == first_segment + count) {
        r.spectrum = *spectrum;  // a single piece: the batch result itself
      } else {
        if (sum.empty()) {
          sum.assign(spectrum->values.size(), 0.0);
          r.spectrum = *spectrum;
        }
        for (std::size_t b = 0; b < sum.size(); ++b) sum[b] += weight * spectrum->values[b];
      }
      k = j + 1;
    }
    if (!sum.empty()) {
      for (std::size_t b = 0; b < sum.size(); ++b)
        r.spectrum.values[b] = sum[b] / static_cast<double>(count);
    }
    r.spectrum.segment_count = count;
    estimators::IndicatorAccumulator acc;
    acc.Add(std::span<const double>(all.data() + previous_end, end_global - previous_end));
    r.indicators = acc.Current();
    for (const auto& band : settings.bands) {
      auto value = estimators::IntegrateBand(r.spectrum, band, settings.sample_unit);
      EXPECT_TRUE(value.ok()) << value.message();
      r.band_rms.push_back(value.ok() ? value->rms : NAN);
    }
    const std::size_t start_piece = piece_of(previous_end);
    r.start_base_ns = pieces[start_piece].first_ns;
    r.start_offset_ns = static_cast<double>(previous_end - offset[start_piece]) * 1e9 / fs;
    r.end_base_ns = pieces[end_piece].first_ns;
    r.end_offset_ns = static_cast<double>(end_local) * 1e9 / fs;
    previous_end = end_global;
    records.push_back(std::move(r));
  };

  // No average spans a gap: at each restart the interval in progress ends with the piece (a
  // shorter record), or, holding no whole segment, is dropped.
  std::size_t done = 0;
  for (std::size_t p = 0; p < pieces.size(); ++p) {
    std::size_t end = done;
    while (end < segments.size() && segments[end].piece == p) ++end;
    while (done + per_average <= end) {
      const Segment& last = segments[done + per_average - 1];
      const std::size_t end_local = last.start + length;
      make(done, per_average, offset[last.piece] + end_local, last.piece, end_local);
      done += per_average;
    }
    const bool restarted_after = p + 1 < pieces.size();
    const std::size_t size = pieces[p].samples.size();
    if (done < end && (restarted_after || flush)) {
      make(done, end - done, offset[p] + size, p, size);
      done = end;
    } else if (restarted_after) {
      previous_end = offset[p + 1];
    }
  }
  return records;
}

// |actual - expected| within `relative` of the expected magnitude (floor: `floor`).
inline ::testing::AssertionResult Near(double actual, double expected, double relative,
                                       double floor = 0.0) {
  const double allowed = std::max(relative * std::fabs(expected), floor);
  if (std::fabs(actual - expected) <= allowed) return ::testing::AssertionSuccess();
  return ::testing::AssertionFailure()
         << actual << " vs expected " << expected << " (off by " << std::fabs(actual - expected)
         << ", allowed " << allowed << ")";
}

// Spectrum bins within 1e-12 relative (the batch and streaming paths cut the same segments and
// run the same FFT, so only the order of the averaging sums may differ); indicators within 1e-10
// relative (block-wise merged moments against one pass); times within 1 ns (rounding to whole ns).
inline void ExpectRecordsMatch(const std::vector<storage::MeasurementRecord>& actual,
                               const std::vector<ExpectedRecord>& expected,
                               double spectrum_relative = 1e-12) {
  ASSERT_EQ(actual.size(), expected.size());
  for (std::size_t r = 0; r < actual.size(); ++r) {
    SCOPED_TRACE("record " + std::to_string(r));
    const auto& a = actual[r];
    const auto& e = expected[r];
    EXPECT_EQ(a.segment_count, e.segment_count);
    ASSERT_EQ(a.spectrum.values.size(), e.spectrum.values.size());
    const double peak = *std::max_element(e.spectrum.values.begin(), e.spectrum.values.end());
    std::size_t bad_bins = 0;
    for (std::size_t b = 0; b < e.spectrum.values.size(); ++b) {
      auto near = Near(a.spectrum.values[b], e.spectrum.values[b], spectrum_relative,
                       spectrum_relative * 1e-9 * peak);
      if (!near && bad_bins++ < 3) ADD_FAILURE() << "bin " << b << ": " << near.message();
    }
    EXPECT_EQ(bad_bins, 0u);
    const auto& ai = a.indicators;
    const auto& ei = e.indicators;
    EXPECT_EQ(ai.count, ei.count);
    EXPECT_TRUE(Near(ai.mean, ei.mean, 1e-10, 1e-12 * ei.rms));
    EXPECT_TRUE(Near(ai.rms, ei.rms, 1e-10));
    EXPECT_TRUE(Near(ai.peak, ei.peak, 1e-10));
    EXPECT_TRUE(Near(ai.peak_to_peak, ei.peak_to_peak, 1e-10));
    EXPECT_TRUE(Near(ai.crest_factor, ei.crest_factor, 1e-10));
    EXPECT_TRUE(Near(ai.kurtosis, ei.kurtosis, 1e-10));
    ASSERT_EQ(a.bands.size(), e.band_rms.size());
    for (std::size_t b = 0; b < e.band_rms.size(); ++b)
      EXPECT_TRUE(Near(a.bands[b].rms, e.band_rms[b], spectrum_relative)) << a.bands[b].name;
    EXPECT_TRUE(Near(static_cast<double>(a.interval_start_ns - e.start_base_ns), e.start_offset_ns,
                     0.0, 1.0))
        << "interval start";
    EXPECT_TRUE(
        Near(static_cast<double>(a.interval_end_ns - e.end_base_ns), e.end_offset_ns, 0.0, 1.0))
        << "interval end";
  }
}

}  // namespace spinward::daemon::testing
