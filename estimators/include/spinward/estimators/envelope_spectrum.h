// Envelope analysis for rolling-element bearing faults (Randall & Antoni, "Rolling element bearing
// diagnostics - a tutorial", MSSP 25, 2011).
//
// A flaw struck once per pass rings a structural resonance; the impacts are weak at low frequency
// but repeat at the defect rate as the envelope of the ringing. So: band-pass a block around the
// resonance through the analytic signal (FFT of the block, keep the positive frequencies inside the
// band, doubled, inverse FFT), square its magnitude (the squared envelope), remove the mean and
// take its averaged Welch spectrum. Lines at a defect frequency and its harmonics then stand above
// the envelope spectrum's median level; FindHarmonicLines measures them, with a tolerance for slip.
// Values are returned by value; nothing is kept between calls. FFT plans come from
// FftPlanCache::Shared().
// Thread-safety: pure functions, safe to call from many threads at once.
#pragma once

#include <complex>
#include <cstddef>
#include <span>
#include <vector>

#include "spinward/estimators/result.h"
#include "spinward/estimators/streaming_welch.h"
#include "spinward/estimators/window.h"

namespace spinward::estimators {

struct EnvelopeOptions {
  double sample_rate_hz = 0.0;
  double band_low_hz = 0.0;   // demodulation band, inside [0, fs/2]
  double band_high_hz = 0.0;  // greater than band_low_hz
  // The Welch estimate of the squared envelope's spectrum (density, one-sided, mean of segments,
  // per-segment mean removed).
  std::size_t segment_length = 8192;
  std::size_t overlap = 4096;
  WindowSpec window;

  // Names the first bad field and its value, e.g. "band_high_hz 9000 must not exceed fs/2 6400".
  Status Validate() const;
  bool operator==(const EnvelopeOptions&) const = default;
};

// The complex analytic signal of the block's content in [low_hz, high_hz]; same length as the
// block. Rejects an empty block, non-finite samples and a band outside [0, fs/2].
Result<std::vector<std::complex<double>>> AnalyticBandSignal(std::span<const double> block,
                                                             double sample_rate_hz, double low_hz,
                                                             double high_hz);

// |analytic band signal|^2, sample by sample.
Result<std::vector<double>> SquaredEnvelope(std::span<const double> block,
                                            const EnvelopeOptions& options);

// The Welch density spectrum of the squared envelope with its mean removed (unit^4/Hz for a block
// in unit). A block shorter than one segment gives no values and segment_count 0, as Welch() does.
Result<AveragedSpectrum> EnvelopeSpectrum(std::span<const double> block,
                                          const EnvelopeOptions& options);

struct LineSearch {
  double frequency_hz = 0.0;       // the expected line, e.g. BPFO in Hz
  std::size_t harmonics = 3;       // orders 1..harmonics are measured
  double tolerance = 0.02;         // relative half-width of each search band (slip is 1-2 %)
  double min_half_width_bins = 2;  // but never narrower than this many bins (a window's main lobe)
  // The background is the median density over (0, background_max_hz]; 0 means up to Nyquist.
  double background_max_hz = 0.0;

  Status Validate() const;
};

struct HarmonicLine {
  std::size_t order = 0;
  double nominal_hz = 0.0;        // order x frequency_hz
  double peak_hz = 0.0;           // the highest bin inside the search band
  double power = 0.0;             // sum of density x bin width over the search band: mean square
  double background_power = 0.0;  // median density x the search band's width
  double ratio = 0.0;             // power / background_power; about 1 where there is no line
};

// Measures the lines of a one-sided density spectrum (as EnvelopeSpectrum returns) at frequency_hz
// and its harmonics. Harmonics whose band passes Nyquist are left out.
Result<std::vector<HarmonicLine>> FindHarmonicLines(const AveragedSpectrum& spectrum,
                                                    const LineSearch& search);

// Spectral kurtosis, to choose the demodulation band (Antoni, MSSP 20, 2006): over STFT frames
// (Hann window, frame_length samples, hop samples apart), SK(f) = <|X|^4> / <|X|^2>^2 - 2. About 0
// for Gaussian noise, -1 for a steady tone, large where impacts come and go. The DC and Nyquist
// bins of real noise are real-valued and sit at 1 instead of 0. A bin with no energy gets 0.
struct SpectralKurtosis {
  std::vector<double> values;  // frame_length / 2 + 1 bins
  double sample_rate_hz = 0.0;
  std::size_t frame_length = 0;
  std::size_t frames = 0;

  double FrequencyHz(std::size_t bin) const {
    return static_cast<double>(bin) * sample_rate_hz / static_cast<double>(frame_length);
  }
};

// Rejects non-finite samples, frame_length < 4, hop 0 or hop > frame_length, and a block holding
// fewer than 2 frames.
Result<SpectralKurtosis> ComputeSpectralKurtosis(std::span<const double> block,
                                                 double sample_rate_hz, std::size_t frame_length,
                                                 std::size_t hop);

}  // namespace spinward::estimators
