#include "spinward/estimators/envelope_spectrum.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <memory>
#include <string>

#include "spinward/estimators/fft_plan_cache.h"

namespace spinward::estimators {
namespace {

std::string Num(double value) {
  char text[32];
  std::snprintf(text, sizeof(text), "%.6g", value);
  return text;
}

Status ValidateBand(double sample_rate_hz, double low_hz, double high_hz) {
  if (!std::isfinite(sample_rate_hz) || sample_rate_hz <= 0.0) {
    return Error{"sample_rate_hz " + Num(sample_rate_hz) + " must be finite and positive"};
  }
  if (!std::isfinite(low_hz) || low_hz < 0.0) {
    return Error{"band_low_hz " + Num(low_hz) + " must be finite and not negative"};
  }
  if (!std::isfinite(high_hz) || high_hz <= low_hz) {
    return Error{"band_high_hz " + Num(high_hz) + " must be greater than band_low_hz " +
                 Num(low_hz)};
  }
  if (high_hz > sample_rate_hz / 2.0) {
    return Error{"band_high_hz " + Num(high_hz) + " must not exceed fs/2 " +
                 Num(sample_rate_hz / 2.0)};
  }
  return Status::Ok();
}

// Forward real DFT of `in` (n values) into n/2 + 1 bins, through the shared plan cache.
struct RealTransform {
  explicit RealTransform(std::size_t n)
      : fft(FftPlanCache::Shared().Get(n)),
        in(n * sizeof(double)),
        out((n / 2 + 1) * sizeof(std::complex<double>)) {}
  double* input() const { return static_cast<double*>(in.data()); }
  std::complex<double>* output() const { return static_cast<std::complex<double>*>(out.data()); }
  void Run() const { fft->Forward(input(), output()); }
  // Bin k of the full n-point DFT, from the one-sided output by conjugate symmetry.
  std::complex<double> Bin(std::size_t k, std::size_t n) const {
    return k <= n / 2 ? output()[k] : std::conj(output()[n - k]);
  }

  std::shared_ptr<const RealFft> fft;
  AlignedBuffer in;
  AlignedBuffer out;
};

}  // namespace

Status EnvelopeOptions::Validate() const {
  if (Status status = ValidateBand(sample_rate_hz, band_low_hz, band_high_hz); !status.ok()) {
    return status;
  }
  if (segment_length < 2) {
    return Error{"segment_length " + std::to_string(segment_length) + " must be at least 2"};
  }
  if (overlap >= segment_length) {
    return Error{"overlap " + std::to_string(overlap) + " must be less than segment_length " +
                 std::to_string(segment_length)};
  }
  return Status::Ok();
}

Status LineSearch::Validate() const {
  if (!std::isfinite(frequency_hz) || frequency_hz <= 0.0) {
    return Error{"frequency_hz " + Num(frequency_hz) + " must be finite and positive"};
  }
  if (harmonics < 1) return Error{"harmonics 0 must be at least 1"};
  if (!std::isfinite(tolerance) || tolerance < 0.0 || tolerance >= 0.5) {
    return Error{"tolerance " + Num(tolerance) + " must be in [0, 0.5)"};
  }
  if (!std::isfinite(min_half_width_bins) || min_half_width_bins < 0.0) {
    return Error{"min_half_width_bins " + Num(min_half_width_bins) +
                 " must be finite and not negative"};
  }
  if (!std::isfinite(background_max_hz) || background_max_hz < 0.0) {
    return Error{"background_max_hz " + Num(background_max_hz) +
                 " must be finite and not negative"};
  }
  return Status::Ok();
}

Result<std::vector<std::complex<double>>> AnalyticBandSignal(std::span<const double> block,
                                                             double sample_rate_hz, double low_hz,
                                                             double high_hz) {
  if (Status status = ValidateBand(sample_rate_hz, low_hz, high_hz); !status.ok()) return status;
  const std::size_t n = block.size();
  if (n < 2) return Error{"block of " + std::to_string(n) + " samples is too short (need 2)"};
  for (std::size_t i = 0; i < n; ++i) {
    if (!std::isfinite(block[i])) {
      return Error{"sample " + std::to_string(i) + " is " + Num(block[i]) + ", not finite"};
    }
  }

  RealTransform forward(n);
  std::copy(block.begin(), block.end(), forward.input());
  forward.Run();

  // One-sided band spectrum Z: positive frequencies doubled; DC and Nyquist have no negative twin
  // and are kept once.
  const std::size_t bins = n / 2 + 1;
  std::vector<std::complex<double>> band(bins, 0.0);
  const double bin_hz = sample_rate_hz / static_cast<double>(n);
  for (std::size_t k = 0; k < bins; ++k) {
    const double f = static_cast<double>(k) * bin_hz;
    if (f < low_hz || f > high_hz) continue;
    const bool unpaired = k == 0 || (n % 2 == 0 && k == n / 2);
    band[k] = (unpaired ? 1.0 : 2.0) * forward.output()[k];
  }

  // z[t] = (1/n) sum_k Z[k] e^{+j 2 pi k t / n} = conj(DFT(conj Z))[t] / n, and the DFT of the
  // complex sequence conj Z is DFT(Re Z) + j DFT(-Im Z): two real transforms, so only the shared
  // real plans are needed.
  RealTransform re(n);
  RealTransform im(n);
  for (std::size_t k = 0; k < n; ++k) {
    re.input()[k] = k < bins ? band[k].real() : 0.0;
    im.input()[k] = k < bins ? -band[k].imag() : 0.0;
  }
  re.Run();
  im.Run();
  std::vector<std::complex<double>> z(n);
  const double scale = 1.0 / static_cast<double>(n);
  const std::complex<double> j(0.0, 1.0);
  for (std::size_t t = 0; t < n; ++t) {
    z[t] = std::conj(re.Bin(t, n) + j * im.Bin(t, n)) * scale;
  }
  return z;
}

Result<std::vector<double>> SquaredEnvelope(std::span<const double> block,
                                            const EnvelopeOptions& options) {
  if (Status status = options.Validate(); !status.ok()) return status;
  Result<std::vector<std::complex<double>>> z =
      AnalyticBandSignal(block, options.sample_rate_hz, options.band_low_hz, options.band_high_hz);
  if (!z.ok()) return z.status();
  std::vector<double> envelope(z->size());
  for (std::size_t i = 0; i < envelope.size(); ++i) envelope[i] = std::norm((*z)[i]);
  return envelope;
}

Result<AveragedSpectrum> EnvelopeSpectrum(std::span<const double> block,
                                          const EnvelopeOptions& options) {
  Result<std::vector<double>> envelope = SquaredEnvelope(block, options);
  if (!envelope.ok()) return envelope.status();
  // The squared envelope's mean is the band's power, far above its fluctuations; remove it once
  // over the block so no segment's leakage of it hides the low-frequency lines.
  double mean = 0.0;
  for (double v : *envelope) mean += v;
  mean /= static_cast<double>(envelope->size());
  for (double& v : *envelope) v -= mean;

  WelchOptions welch;
  welch.sample_rate_hz = options.sample_rate_hz;
  welch.segment_length = options.segment_length;
  welch.overlap = options.overlap;
  welch.window = options.window;
  welch.detrend = Detrend::kMean;
  welch.scaling = Scaling::kDensity;
  welch.sides = Sides::kOneSided;
  welch.averaging = Averaging::kMean;
  return Welch(*envelope, welch);
}

Result<std::vector<HarmonicLine>> FindHarmonicLines(const AveragedSpectrum& spectrum,
                                                    const LineSearch& search) {
  if (Status status = search.Validate(); !status.ok()) return status;
  if (spectrum.scaling != Scaling::kDensity || spectrum.sides != Sides::kOneSided) {
    return Error{"spectrum must be a one-sided density (as EnvelopeSpectrum returns)"};
  }
  if (spectrum.values.size() < 3 || spectrum.fft_length == 0 || spectrum.sample_rate_hz <= 0.0) {
    return Error{"spectrum has " + std::to_string(spectrum.values.size()) +
                 " bins; at least 3 are needed"};
  }
  const double bin_hz = spectrum.BinWidthHz();
  const std::size_t last = spectrum.values.size() - 1;

  // Background: median density over bins 1.. (DC holds what the mean removal left).
  std::size_t background_last = last;
  if (search.background_max_hz > 0.0) {
    background_last =
        std::min(last, static_cast<std::size_t>(std::floor(search.background_max_hz / bin_hz)));
  }
  if (background_last < 1) {
    return Error{"background_max_hz " + Num(search.background_max_hz) +
                 " is below the first bin at " + Num(bin_hz) + " Hz"};
  }
  std::vector<double> background(spectrum.values.begin() + 1,
                                 spectrum.values.begin() + static_cast<long>(background_last) + 1);
  const std::size_t mid = background.size() / 2;
  std::nth_element(background.begin(), background.begin() + static_cast<long>(mid),
                   background.end());
  double median = background[mid];
  if (background.size() % 2 == 0) {
    const double lower =
        *std::max_element(background.begin(), background.begin() + static_cast<long>(mid));
    median = 0.5 * (median + lower);
  }

  std::vector<HarmonicLine> lines;
  for (std::size_t order = 1; order <= search.harmonics; ++order) {
    const double nominal = static_cast<double>(order) * search.frequency_hz;
    const double half_width =
        std::max(search.tolerance * nominal, search.min_half_width_bins * bin_hz);
    const double low = nominal - half_width;
    const double high = nominal + half_width;
    if (high > static_cast<double>(last) * bin_hz) break;
    const auto first_bin = static_cast<std::size_t>(std::ceil(std::max(low, bin_hz) / bin_hz));
    const auto last_bin = static_cast<std::size_t>(std::floor(high / bin_hz));
    HarmonicLine line;
    line.order = order;
    line.nominal_hz = nominal;
    double peak = -1.0;
    std::size_t count = 0;
    for (std::size_t k = first_bin; k <= last_bin; ++k, ++count) {
      line.power += spectrum.values[k] * bin_hz;
      if (spectrum.values[k] > peak) {
        peak = spectrum.values[k];
        line.peak_hz = static_cast<double>(k) * bin_hz;
      }
    }
    line.background_power = median * static_cast<double>(count) * bin_hz;
    if (line.background_power > 0.0) {
      line.ratio = line.power / line.background_power;
    } else {
      line.ratio = line.power > 0.0 ? std::numeric_limits<double>::infinity() : 0.0;
    }
    lines.push_back(line);
  }
  return lines;
}

Result<SpectralKurtosis> ComputeSpectralKurtosis(std::span<const double> block,
                                                 double sample_rate_hz, std::size_t frame_length,
                                                 std::size_t hop) {
  if (!std::isfinite(sample_rate_hz) || sample_rate_hz <= 0.0) {
    return Error{"sample_rate_hz " + Num(sample_rate_hz) + " must be finite and positive"};
  }
  if (frame_length < 4) {
    return Error{"frame_length " + std::to_string(frame_length) + " must be at least 4"};
  }
  if (hop == 0 || hop > frame_length) {
    return Error{"hop " + std::to_string(hop) + " must be in [1, frame_length " +
                 std::to_string(frame_length) + "]"};
  }
  if (block.size() < frame_length + hop) {
    return Error{"block of " + std::to_string(block.size()) + " samples holds fewer than 2 frames"};
  }
  for (std::size_t i = 0; i < block.size(); ++i) {
    if (!std::isfinite(block[i])) {
      return Error{"sample " + std::to_string(i) + " is " + Num(block[i]) + ", not finite"};
    }
  }
  Result<Window> window = Window::Make(WindowSpec{}, frame_length);  // periodic Hann
  if (!window.ok()) return window.status();
  const std::span<const double> w = window->coefficients();

  RealTransform transform(frame_length);
  const std::size_t bins = frame_length / 2 + 1;
  std::vector<double> sum2(bins, 0.0);
  std::vector<double> sum4(bins, 0.0);
  SpectralKurtosis result;
  result.sample_rate_hz = sample_rate_hz;
  result.frame_length = frame_length;
  for (std::size_t start = 0; start + frame_length <= block.size(); start += hop) {
    for (std::size_t i = 0; i < frame_length; ++i) transform.input()[i] = block[start + i] * w[i];
    transform.Run();
    for (std::size_t k = 0; k < bins; ++k) {
      const double p = std::norm(transform.output()[k]);
      sum2[k] += p;
      sum4[k] += p * p;
    }
    ++result.frames;
  }
  // SK = (sum4 / K) / (sum2 / K)^2 - 2 = K sum4 / sum2^2 - 2.
  const double frames = static_cast<double>(result.frames);
  result.values.assign(bins, 0.0);
  for (std::size_t k = 0; k < bins; ++k) {
    if (sum2[k] > 0.0) result.values[k] = frames * sum4[k] / (sum2[k] * sum2[k]) - 2.0;
  }
  return result;
}

}  // namespace spinward::estimators
