// Window functions for spectral estimation, with the figures an analyst needs to read a spectrum:
// coherent gain, equivalent noise bandwidth, and the amplitude and energy correction factors.
// Periodic (DFT-even) by default, as scipy.signal.get_window returns them; symmetric on request.
// Thread-safety: immutable after construction; share freely.
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/result.h"

namespace spinward::estimators {

enum class WindowKind {
  kRectangular,
  kHann,
  kHamming,
  kBlackman,
  kBlackmanHarris,
  kFlatTop,
  kKaiser
};
enum class WindowSymmetry { kPeriodic, kSymmetric };

struct WindowSpec {
  WindowKind kind = WindowKind::kHann;
  WindowSymmetry symmetry = WindowSymmetry::kPeriodic;
  double kaiser_beta = 14.0;  // used by kKaiser only
  bool operator==(const WindowSpec&) const = default;
};

// Parses "hann", "hamming", "blackman", "blackmanharris", "flattop", "rectangular" (or "boxcar"),
// "kaiser:BETA"; an optional ",symmetric" suffix asks for the symmetric form.
Result<WindowSpec> ParseWindowSpec(std::string_view text);
std::string ToString(const WindowSpec& spec);

class Window {
 public:
  static Result<Window> Make(const WindowSpec& spec, std::size_t length);

  const WindowSpec& spec() const { return spec_; }
  std::size_t size() const { return w_.size(); }
  std::span<const double> coefficients() const { return w_; }
  double sum() const { return sum_; }  // signed: flat-top dips below zero
  double sum_of_squares() const { return sum_of_squares_; }
  double coherent_gain() const;  // sum(w) / L
  double enbw_bins() const;      // L * sum(w^2) / sum(w)^2
  // ENBW in Hz, fs * sum(w^2) / sum(w)^2. It depends on the window and fs only: zero-padding to a
  // longer FFT narrows the bins, not the window's noise bandwidth.
  double enbw_hz(double sample_rate_hz) const;
  double enbw_fft_bins(std::size_t fft_length) const;  // the same in bins of fs / M
  double amplitude_correction() const;                 // L / sum(w): restores a sine's peak
  double energy_correction() const;                    // sqrt(L / sum(w^2)): restores RMS

 private:
  Window(WindowSpec spec, std::vector<double> w);
  WindowSpec spec_;
  std::vector<double> w_;
  double sum_ = 0.0;
  double sum_of_squares_ = 0.0;
};

}  // namespace spinward::estimators
