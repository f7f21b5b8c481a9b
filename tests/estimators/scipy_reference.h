// The outside reference for the estimator tests: scipy.signal (Debian's /usr/bin/python3) called
// through tests/reference/welch_reference.py, plus a comparison that reports the worst bin.
// A failed Python call is a test failure, never a skip.
#pragma once

#include <gtest/gtest.h>

#include <cstddef>
#include <cstdint>
#include <span>
#include <string>
#include <vector>

#include "spinward/estimators/streaming_welch.h"

namespace spinward::testing {

struct ReferenceSpectrum {
  bool ok = false;
  std::string error;  // the command and its stderr when !ok
  std::vector<double> values;
  std::size_t segments = 0;
};

// The spectrum SciPy computes for `signal` with the parameters of `options` (see the script for
// how exponential and peak-hold averages are formed from scipy.signal.spectrogram).
ReferenceSpectrum ScipyWelch(std::span<const double> signal,
                             const estimators::WelchOptions& options);

// scipy.signal.get_window for each spec and length, in one Python call (empty and `error` set on
// failure).
struct ReferenceWindows {
  bool ok = false;
  std::string error;
  std::vector<std::vector<double>> windows;
};
ReferenceWindows ScipyGetWindows(std::span<const estimators::WindowSpec> specs,
                                 std::span<const std::size_t> lengths);

// Every bin within rel_tol of the reference, or within floor_fraction x max(|reference|) for bins
// that are numerically zero (where a relative error means nothing).
::testing::AssertionResult SpectraClose(std::span<const double> actual,
                                        std::span<const double> expected, double rel_tol,
                                        double floor_fraction);

// A test signal: Gaussian noise (std 1) plus a few sines, a DC offset and a slow drift, so that
// detrending, leakage and the noise floor all matter. Deterministic for a given seed.
std::vector<double> VibrationLikeSignal(std::size_t length, double sample_rate_hz,
                                        std::uint64_t seed);

}  // namespace spinward::testing
