#include "estimators/scipy_reference.h"

#include <algorithm>
#include <cmath>
#include <fstream>
#include <numbers>
#include <random>
#include <sstream>

#include "support/test_paths.h"

namespace spinward::testing {
namespace {

using estimators::Averaging;
using estimators::Detrend;
using estimators::Scaling;
using estimators::Sides;
using estimators::WindowKind;

std::string ScipyWindowName(WindowKind kind) {
  switch (kind) {
    case WindowKind::kRectangular:
      return "boxcar";
    case WindowKind::kHann:
      return "hann";
    case WindowKind::kHamming:
      return "hamming";
    case WindowKind::kBlackman:
      return "blackman";
    case WindowKind::kBlackmanHarris:
      return "blackmanharris";
    case WindowKind::kFlatTop:
      return "flattop";
    case WindowKind::kKaiser:
      return "kaiser";
  }
  return "unknown";
}

std::string Json(const estimators::WelchOptions& o) {
  std::ostringstream json;
  json.precision(17);
  json << "{\"fs\": " << o.sample_rate_hz << ", \"nperseg\": " << o.segment_length
       << ", \"noverlap\": " << o.overlap << ", \"nfft\": " << o.EffectiveFftLength()
       << ", \"window\": \"" << ScipyWindowName(o.window.kind) << "\""
       << ", \"kaiser_beta\": " << o.window.kaiser_beta << ", \"symmetric\": "
       << (o.window.symmetry == estimators::WindowSymmetry::kSymmetric ? "true" : "false")
       << ", \"detrend\": \""
       << (o.detrend == Detrend::kNone ? "none"
                                       : (o.detrend == Detrend::kMean ? "constant" : "linear"))
       << "\", \"scaling\": \"" << (o.scaling == Scaling::kDensity ? "density" : "spectrum")
       << "\", \"onesided\": " << (o.sides == Sides::kOneSided ? "true" : "false")
       << ", \"average\": \"" << estimators::ToString(o.averaging) << "\""
       << ", \"tau\": " << o.exponential_time_constant_s << "}";
  return json.str();
}

}  // namespace

ReferenceSpectrum ScipyWelch(std::span<const double> signal,
                             const estimators::WelchOptions& options) {
  ReferenceSpectrum reference;
  const auto dir = FreshTempDir("scipy-welch");
  const auto input = dir / "signal.f64";
  const auto output = dir / "spectrum.f64";
  {
    // Raw float64 in the machine's order; the script reads little-endian (all our targets are).
    std::ofstream out(input, std::ios::binary);
    out.write(reinterpret_cast<const char*>(signal.data()),
              static_cast<std::streamsize>(signal.size_bytes()));
  }
  const std::string command =
      ReferencePython() + " " +
      (SourceDir() / "tests" / "reference" / "welch_reference.py").string() + " " + input.string() +
      " " + output.string() + " '" + Json(options) + "'";
  const CommandResult run = RunCommand(command);
  if (run.exit_code != 0) {
    reference.error = "reference failed (exit " + std::to_string(run.exit_code) + "): " + command +
                      "\n" + run.error_output;
    return reference;
  }
  std::ifstream in(output, std::ios::binary | std::ios::ate);
  const auto bytes = static_cast<std::size_t>(in.tellg());
  reference.values.resize(bytes / sizeof(double));
  in.seekg(0);
  in.read(reinterpret_cast<char*>(reference.values.data()), static_cast<std::streamsize>(bytes));
  const auto pos = run.output.find("\"segments\": ");
  if (pos != std::string::npos) reference.segments = std::stoul(run.output.substr(pos + 12));
  reference.ok = in.good() || in.eof();
  if (!reference.ok) reference.error = "could not read " + output.string();
  std::filesystem::remove_all(dir);
  return reference;
}

ReferenceWindows ScipyGetWindows(std::span<const estimators::WindowSpec> specs,
                                 std::span<const std::size_t> lengths) {
  ReferenceWindows reference;
  std::ostringstream json;
  json.precision(17);
  json << "[";
  for (std::size_t i = 0; i < specs.size(); ++i) {
    json << (i == 0 ? "" : ", ") << "{\"window\": \"" << ScipyWindowName(specs[i].kind)
         << "\", \"kaiser_beta\": " << specs[i].kaiser_beta << ", \"symmetric\": "
         << (specs[i].symmetry == estimators::WindowSymmetry::kSymmetric ? "true" : "false")
         << ", \"nperseg\": " << lengths[i] << "}";
  }
  json << "]";
  const auto dir = FreshTempDir("scipy-window");
  const auto output = dir / "windows.f64";
  const std::string command =
      ReferencePython() + " " +
      (SourceDir() / "tests" / "reference" / "welch_reference.py").string() + " window " +
      output.string() + " '" + json.str() + "'";
  const CommandResult run = RunCommand(command);
  if (run.exit_code != 0) {
    reference.error = "reference failed (exit " + std::to_string(run.exit_code) + "): " + command +
                      "\n" + run.error_output;
    return reference;
  }
  std::ifstream in(output, std::ios::binary);
  for (std::size_t length : lengths) {
    std::vector<double> w(length);
    in.read(reinterpret_cast<char*>(w.data()),
            static_cast<std::streamsize>(length * sizeof(double)));
    reference.windows.push_back(std::move(w));
  }
  reference.ok = in.good();
  if (!reference.ok) reference.error = "short read from " + output.string();
  std::filesystem::remove_all(dir);
  return reference;
}

::testing::AssertionResult SpectraClose(std::span<const double> actual,
                                        std::span<const double> expected, double rel_tol,
                                        double floor_fraction) {
  if (actual.size() != expected.size()) {
    return ::testing::AssertionFailure()
           << "bin count " << actual.size() << " vs reference " << expected.size();
  }
  if (expected.empty()) return ::testing::AssertionFailure() << "empty reference spectrum";
  double peak = 0.0;
  for (double v : expected) peak = std::max(peak, std::abs(v));
  const double floor = floor_fraction * peak;
  double worst = 0.0;
  std::size_t worst_bin = 0;
  for (std::size_t m = 0; m < actual.size(); ++m) {
    const double error = std::abs(actual[m] - expected[m]);
    const double allowed = std::max(rel_tol * std::abs(expected[m]), floor);
    if (error / allowed > worst) {
      worst = error / allowed;
      worst_bin = m;
    }
  }
  if (worst > 1.0) {
    return ::testing::AssertionFailure()
           << "bin " << worst_bin << ": " << actual[worst_bin] << " vs reference "
           << expected[worst_bin] << " (error " << worst << " x the allowed " << rel_tol
           << " relative / " << floor << " absolute)";
  }
  return ::testing::AssertionSuccess();
}

std::vector<double> VibrationLikeSignal(std::size_t length, double sample_rate_hz,
                                        std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> noise(0.0, 1.0);
  std::vector<double> x(length);
  const double two_pi = 2.0 * std::numbers::pi;
  for (std::size_t n = 0; n < length; ++n) {
    const double t = static_cast<double>(n) / sample_rate_hz;
    x[n] = 3.0 + 0.002 * static_cast<double>(n) + noise(rng) +
           5.0 * std::sin(two_pi * 0.1234 * sample_rate_hz * t + 0.3) +
           0.5 * std::sin(two_pi * 0.3011 * sample_rate_hz * t + 1.1);
  }
  return x;
}

}  // namespace spinward::testing
