// Window coefficients follow scipy.signal.get_window (SciPy 1.10): the cosine-sum windows are
// a0 - a1 cos(2 pi n / N) + a2 cos(4 pi n / N) - ..., with N = L - 1 for the symmetric form and
// N = L for the periodic (DFT-even) form, which is the symmetric window of length L + 1 with its
// last sample dropped. Kaiser is I0(beta sqrt(1 - ((n - a) / a)^2)) / I0(beta), a = N / 2. Sums are
// kept signed: the flat-top window dips below zero near its ends.
#include "spinward/estimators/window.h"

#include "number_text.h"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <numbers>
#include <string>
#include <utility>

namespace spinward::estimators {
namespace {

// Largest beta for which I0(beta) stays finite in double precision (I0(700) is about 1.5e302).
constexpr double kMaxKaiserBeta = 700.0;

std::vector<double> CosineSum(std::span<const double> a, std::size_t length, double denominator) {
  std::vector<double> w(length);
  for (std::size_t n = 0; n < length; ++n) {
    const double phase = 2.0 * std::numbers::pi * static_cast<double>(n) / denominator;
    double value = 0.0;
    double sign = 1.0;
    for (std::size_t k = 0; k < a.size(); ++k) {
      value += sign * a[k] * std::cos(static_cast<double>(k) * phase);
      sign = -sign;
    }
    w[n] = value;
  }
  return w;
}

std::vector<double> Kaiser(double beta, std::size_t length, double denominator) {
  std::vector<double> w(length);
  const double half = denominator / 2.0;
  const double norm = std::cyl_bessel_i(0.0, beta);
  for (std::size_t n = 0; n < length; ++n) {
    const double r = (static_cast<double>(n) - half) / half;
    const double arg = std::max(0.0, 1.0 - r * r);
    w[n] = std::cyl_bessel_i(0.0, beta * std::sqrt(arg)) / norm;
  }
  return w;
}

}  // namespace

Result<WindowSpec> ParseWindowSpec(std::string_view text) {
  WindowSpec spec;
  std::string_view name = text;
  if (const auto comma = text.find(','); comma != std::string_view::npos) {
    const std::string_view form = text.substr(comma + 1);
    name = text.substr(0, comma);
    if (form == "symmetric") {
      spec.symmetry = WindowSymmetry::kSymmetric;
    } else if (form == "periodic") {
      spec.symmetry = WindowSymmetry::kPeriodic;
    } else {
      return Error{"window '" + std::string(text) + "': unknown form '" + std::string(form) +
                   "' (expected 'symmetric' or 'periodic')"};
    }
  }
  if (name == "rectangular" || name == "boxcar") {
    spec.kind = WindowKind::kRectangular;
  } else if (name == "hann") {
    spec.kind = WindowKind::kHann;
  } else if (name == "hamming") {
    spec.kind = WindowKind::kHamming;
  } else if (name == "blackman") {
    spec.kind = WindowKind::kBlackman;
  } else if (name == "blackmanharris") {
    spec.kind = WindowKind::kBlackmanHarris;
  } else if (name == "flattop") {
    spec.kind = WindowKind::kFlatTop;
  } else if (name.starts_with("kaiser:")) {
    spec.kind = WindowKind::kKaiser;
    const std::string_view beta_text = name.substr(7);
    double beta = 0.0;
    auto [end, ec] = std::from_chars(beta_text.data(), beta_text.data() + beta_text.size(), beta);
    if (ec != std::errc() || end != beta_text.data() + beta_text.size()) {
      return Error{"window '" + std::string(text) + "': kaiser beta '" + std::string(beta_text) +
                   "' is not a number"};
    }
    spec.kaiser_beta = beta;
  } else if (name == "kaiser") {
    return Error{"window '" + std::string(text) + "': kaiser needs a beta, e.g. 'kaiser:14'"};
  } else {
    return Error{"window '" + std::string(text) +
                 "' is unknown (expected rectangular, hann, hamming, blackman, blackmanharris, "
                 "flattop or kaiser:BETA)"};
  }
  if (spec.kind == WindowKind::kKaiser &&
      !(std::isfinite(spec.kaiser_beta) && spec.kaiser_beta >= 0.0 &&
        spec.kaiser_beta <= kMaxKaiserBeta)) {
    return Error{"window '" + std::string(text) + "': kaiser beta " + NumberText(spec.kaiser_beta) +
                 " must be between 0 and 700"};
  }
  return spec;
}

std::string ToString(const WindowSpec& spec) {
  std::string name;
  switch (spec.kind) {
    case WindowKind::kRectangular:
      name = "rectangular";
      break;
    case WindowKind::kHann:
      name = "hann";
      break;
    case WindowKind::kHamming:
      name = "hamming";
      break;
    case WindowKind::kBlackman:
      name = "blackman";
      break;
    case WindowKind::kBlackmanHarris:
      name = "blackmanharris";
      break;
    case WindowKind::kFlatTop:
      name = "flattop";
      break;
    case WindowKind::kKaiser:
      name = "kaiser:" + NumberText(spec.kaiser_beta);
      break;
  }
  if (spec.symmetry == WindowSymmetry::kSymmetric) name += ",symmetric";
  return name;
}

Result<Window> Window::Make(const WindowSpec& spec, std::size_t length) {
  if (length == 0) return Error{"window length 0: a window needs at least one sample"};
  if (spec.kind == WindowKind::kKaiser &&
      !(std::isfinite(spec.kaiser_beta) && spec.kaiser_beta >= 0.0 &&
        spec.kaiser_beta <= kMaxKaiserBeta)) {
    return Error{"window kaiser_beta " + NumberText(spec.kaiser_beta) +
                 " must be finite and between 0 and 700"};
  }
  if (length == 1) return Window(spec, std::vector<double>{1.0});  // as SciPy: a single 1

  // Periodic: the symmetric window of length L + 1 without its last sample.
  const double denominator = spec.symmetry == WindowSymmetry::kPeriodic
                                 ? static_cast<double>(length)
                                 : static_cast<double>(length - 1);
  // Coefficients as SciPy 1.10 writes them (scipy/signal/windows/_windows.py).
  static constexpr double kHann[] = {0.5, 0.5};
  static constexpr double kHamming[] = {0.54, 0.46};
  static constexpr double kBlackman[] = {0.42, 0.50, 0.08};
  static constexpr double kBlackmanHarris[] = {0.35875, 0.48829, 0.14128, 0.01168};
  static constexpr double kFlatTop[] = {0.21557895, 0.41663158, 0.277263158, 0.083578947,
                                        0.006947368};
  std::vector<double> w;
  switch (spec.kind) {
    case WindowKind::kRectangular:
      w.assign(length, 1.0);
      break;
    case WindowKind::kHann:
      w = CosineSum(kHann, length, denominator);
      break;
    case WindowKind::kHamming:
      w = CosineSum(kHamming, length, denominator);
      break;
    case WindowKind::kBlackman:
      w = CosineSum(kBlackman, length, denominator);
      break;
    case WindowKind::kBlackmanHarris:
      w = CosineSum(kBlackmanHarris, length, denominator);
      break;
    case WindowKind::kFlatTop:
      w = CosineSum(kFlatTop, length, denominator);
      break;
    case WindowKind::kKaiser:
      w = Kaiser(spec.kaiser_beta, length, denominator);
      break;
    default:
      return Error{"window kind " + std::to_string(static_cast<int>(spec.kind)) + " is unknown"};
  }
  return Window(spec, std::move(w));
}

Window::Window(WindowSpec spec, std::vector<double> w) : spec_(spec), w_(std::move(w)) {
  for (double value : w_) {
    sum_ += value;
    sum_of_squares_ += value * value;
  }
}

double Window::coherent_gain() const { return sum_ / static_cast<double>(w_.size()); }

double Window::enbw_bins() const {
  return static_cast<double>(w_.size()) * sum_of_squares_ / (sum_ * sum_);
}

double Window::enbw_hz(double sample_rate_hz) const {
  return sample_rate_hz * sum_of_squares_ / (sum_ * sum_);
}

double Window::enbw_fft_bins(std::size_t fft_length) const {
  return static_cast<double>(fft_length) * sum_of_squares_ / (sum_ * sum_);
}

double Window::amplitude_correction() const { return static_cast<double>(w_.size()) / sum_; }

double Window::energy_correction() const {
  return std::sqrt(static_cast<double>(w_.size()) / sum_of_squares_);
}

}  // namespace spinward::estimators
