// Envelope analysis (Randall & Antoni, "Rolling element bearing diagnostics - a tutorial", MSSP 25,
// 2011) on signals whose envelope is known on paper, and on a synthetic bearing fault.
#include "spinward/estimators/envelope_spectrum.h"

#include "support/test_paths.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <random>
#include <sstream>
#include <string>
#include <vector>

namespace spinward::estimators {
namespace {

using ::testing::HasSubstr;

constexpr double kPi = std::numbers::pi;

TEST(AnalyticBandSignal, CosineInBandBecomesUnitPhasorAndOutOfBandIsRemoved) {
  // cos(w t) = Re e^{j w t}: its analytic signal is e^{j w t}, magnitude 1 (Hilbert pair,
  // textbook). A second tone outside the band must vanish. Both tones sit on DFT bins, so the
  // brick-wall band-pass is exact to rounding.
  constexpr double kFs = 4096.0;
  constexpr std::size_t kN = 4096;
  std::vector<double> x(kN);
  for (std::size_t i = 0; i < kN; ++i) {
    const double t = static_cast<double>(i) / kFs;
    x[i] = std::cos(2.0 * kPi * 600.0 * t) + 0.7 * std::cos(2.0 * kPi * 100.0 * t);
  }
  Result<std::vector<std::complex<double>>> z = AnalyticBandSignal(x, kFs, 500.0, 700.0);
  ASSERT_TRUE(z.ok()) << z.message();
  ASSERT_EQ(z->size(), kN);
  for (std::size_t i = 0; i < kN; ++i) {
    const double t = static_cast<double>(i) / kFs;
    ASSERT_NEAR((*z)[i].real(), std::cos(2.0 * kPi * 600.0 * t), 1e-9) << i;
    ASSERT_NEAR((*z)[i].imag(), std::sin(2.0 * kPi * 600.0 * t), 1e-9) << i;
  }
}

TEST(AnalyticBandSignal, FullBandMatchesScipyHilbert) {
  // With the band [0, fs/2] the analytic band signal is the analytic signal of the whole block,
  // which scipy.signal.hilbert computes the same way (Debian's SciPy, /usr/bin/python3). Even and
  // odd lengths (Nyquist bin or none), tones off the bins and noise.
  for (std::size_t n : {1024u, 1001u}) {
    std::vector<double> x(n);
    std::mt19937 rng(static_cast<unsigned>(n));
    std::normal_distribution<double> noise(0.0, 1.0);
    for (std::size_t i = 0; i < n; ++i) {
      const double t = static_cast<double>(i) / 1000.0;
      x[i] = 0.3 + std::sin(2.0 * kPi * 123.4 * t) + 0.5 * std::cos(2.0 * kPi * 401.7 * t) +
             noise(rng);
    }
    const std::filesystem::path dir = testing::FreshTempDir("analytic_" + std::to_string(n));
    {
      std::ofstream out(dir / "x.txt");
      out.precision(17);
      for (double v : x) out << v << "\n";
    }
    const std::string script =
        "import sys, numpy as np, scipy.signal as s; z = s.hilbert(np.loadtxt(sys.argv[1])); "
        "[print(repr(float(v.real)), repr(float(v.imag))) for v in z]";
    testing::CommandResult python = testing::RunCommand(testing::ReferencePython() + " -c '" +
                                                        script + "' " + (dir / "x.txt").string());
    ASSERT_EQ(python.exit_code, 0) << python.output << python.error_output;
    std::istringstream lines(python.output);
    Result<std::vector<std::complex<double>>> z = AnalyticBandSignal(x, 1000.0, 0.0, 500.0);
    ASSERT_TRUE(z.ok()) << z.message();
    ASSERT_EQ(z->size(), n);
    for (std::size_t i = 0; i < n; ++i) {
      double re = 0.0;
      double im = 0.0;
      ASSERT_TRUE(lines >> re >> im) << "SciPy output ended at " << i;
      ASSERT_NEAR((*z)[i].real(), re, 1e-9) << "n " << n << " sample " << i;
      ASSERT_NEAR((*z)[i].imag(), im, 1e-9) << "n " << n << " sample " << i;
    }
  }
}

TEST(EnvelopeSpectrum, AmplitudeModulatedCarrierGivesTheLinesTheAlgebraPredicts) {
  // x = (1 + m cos(2 pi fm t)) cos(2 pi fc t). Inside a band holding fc and fc +- fm the analytic
  // signal is (1 + m cos(2 pi fm t)) e^{j 2 pi fc t}, so the squared envelope is
  //   (1 + m cos)^2 = 1 + m^2/2 + 2 m cos(2 pi fm t) + (m^2/2) cos(2 pi 2fm t).
  // A line of amplitude a has mean square a^2 / 2: at fm (2m)^2/2 = 2 m^2, at 2 fm
  // (m^2/2)^2/2 = m^4/8. Density summed over the line's bins times the bin width is that mean
  // square exactly when the line sits on a bin and the window's whole main lobe is summed
  // (Parseval; Hann's lobe is 3 bins wide).
  constexpr double kFs = 8192.0;
  constexpr std::size_t kN = 8192;
  constexpr double kFc = 1000.0;
  constexpr double kFm = 32.0;  // bin 4 of 1024-sample segments
  constexpr double kM = 0.5;
  std::vector<double> x(kN);
  for (std::size_t i = 0; i < kN; ++i) {
    const double t = static_cast<double>(i) / kFs;
    x[i] = (1.0 + kM * std::cos(2.0 * kPi * kFm * t)) * std::cos(2.0 * kPi * kFc * t);
  }
  EnvelopeOptions options;
  options.sample_rate_hz = kFs;
  options.band_low_hz = 800.0;
  options.band_high_hz = 1200.0;
  options.segment_length = 1024;
  options.overlap = 512;
  Result<AveragedSpectrum> spectrum = EnvelopeSpectrum(x, options);
  ASSERT_TRUE(spectrum.ok()) << spectrum.message();
  EXPECT_EQ(spectrum->segment_count, 15u);  // (8192 - 512) / 512

  LineSearch search;
  search.frequency_hz = kFm;
  search.harmonics = 3;
  Result<std::vector<HarmonicLine>> lines = FindHarmonicLines(*spectrum, search);
  ASSERT_TRUE(lines.ok()) << lines.message();
  ASSERT_EQ(lines->size(), 3u);
  EXPECT_DOUBLE_EQ((*lines)[0].peak_hz, kFm);
  EXPECT_NEAR((*lines)[0].power, 2.0 * kM * kM, 1e-9);  // amplitude 2m = 1.0
  EXPECT_DOUBLE_EQ((*lines)[1].peak_hz, 2.0 * kFm);
  EXPECT_NEAR((*lines)[1].power, std::pow(kM, 4) / 8.0, 1e-9);  // amplitude m^2/2 = 0.125
  // (1 + m cos)^2 has no third harmonic.
  EXPECT_LT((*lines)[2].power, 1e-12);
}

// Synthetic outer-race fault in the form Randall & Antoni use: impacts at BPFO with random spacing
// jitter (slip), each ringing a lightly damped resonance, buried in Gaussian noise, plus shaft
// lines.
std::vector<double> PumpBearingSignal(bool faulty, unsigned seed) {
  constexpr double kFs = 25600.0;
  constexpr std::size_t kN = 102400;  // 4 s
  constexpr double kBpfo = 89.3;
  constexpr double kShaft = 24.8;        // Larkfield P-101, invented
  constexpr double kResonance = 3000.0;  // Hz
  constexpr double kDamping = 0.05;      // ratio: rings for about 1 ms
  std::mt19937 rng(seed);
  std::normal_distribution<double> noise(0.0, 0.5);
  std::normal_distribution<double> jitter(0.0, 0.01);  // 1 % of the spacing, as slip
  std::vector<double> x(kN);
  for (std::size_t i = 0; i < kN; ++i) {
    const double t = static_cast<double>(i) / kFs;
    x[i] = noise(rng) + 1.0 * std::sin(2.0 * kPi * kShaft * t) +
           0.4 * std::sin(2.0 * kPi * 2.0 * kShaft * t + 0.3);
  }
  if (!faulty) return x;
  const double decay = 2.0 * kPi * kDamping * kResonance;
  const auto ring = static_cast<std::size_t>(10.0 / decay * kFs);  // to e^-10
  for (double impact = 0.003; impact < static_cast<double>(kN) / kFs;
       impact += (1.0 + jitter(rng)) / kBpfo) {
    const auto start = static_cast<std::size_t>(std::ceil(impact * kFs));
    for (std::size_t i = start; i < std::min(kN, start + ring); ++i) {
      const double tau = static_cast<double>(i) / kFs - impact;
      x[i] += std::exp(-decay * tau) * std::sin(2.0 * kPi * kResonance * tau);
    }
  }
  return x;
}

Result<std::vector<HarmonicLine>> BpfoLines(const std::vector<double>& x) {
  EnvelopeOptions options;
  options.sample_rate_hz = 25600.0;
  options.band_low_hz = 2000.0;
  options.band_high_hz = 4000.0;
  options.segment_length = 8192;  // 3.125 Hz bins
  options.overlap = 4096;
  Result<AveragedSpectrum> spectrum = EnvelopeSpectrum(x, options);
  if (!spectrum.ok()) return spectrum.status();
  LineSearch search;
  search.frequency_hz = 89.3;
  search.harmonics = 2;
  search.tolerance = 0.02;  // slip, REFERENCE_VALUES.md: lines sit 1-2 % off
  search.background_max_hz =
      500.0;  // the low part of the envelope spectrum, where lines are sought
  return FindHarmonicLines(*spectrum, search);
}

TEST(EnvelopeSpectrum, OuterRaceFaultStandsOutAtBpfoAndItsSecondHarmonic) {
  Result<std::vector<HarmonicLine>> lines = BpfoLines(PumpBearingSignal(true, 20261202));
  ASSERT_TRUE(lines.ok()) << lines.message();
  ASSERT_EQ(lines->size(), 2u);
  for (const HarmonicLine& line : *lines) {
    // Peak within the 2 % slip tolerance of the nominal line (or the 2-bin minimum band).
    EXPECT_NEAR(line.peak_hz, line.nominal_hz, std::max(0.02 * line.nominal_hz, 2 * 3.125))
        << "order " << line.order;
    // Line power over the median background in the same band width. Healthy signals measure
    // 0.91-1.17 (next test); a 4-bin sum of a 24-segment average scatters by about 20 %, so 8 is
    // far outside what noise gives, while this fault measured 23 at BPFO and 17 at 2 x BPFO (seed
    // 20261202). Threshold chosen by us: common practice, no source.
    EXPECT_GT(line.ratio, 8.0) << "order " << line.order;
  }
}

TEST(EnvelopeSpectrum, HealthySignalShowsNoLineAtBpfo) {
  // Noise and shaft lines only: the shaft lines are outside the 2-4 kHz band, so the envelope is
  // that of band-limited Gaussian noise, with a smooth spectrum. The ratio is then a sum of a few
  // averaged bins over their median: near 1 (measured 0.91-1.17 for these
  // seeds). The band [0.5, 2] allows the scatter of an average of 24 segments; common practice, no
  // source.
  for (unsigned seed : {1u, 2u, 3u}) {
    Result<std::vector<HarmonicLine>> lines = BpfoLines(PumpBearingSignal(false, seed));
    ASSERT_TRUE(lines.ok()) << lines.message();
    ASSERT_EQ(lines->size(), 2u);
    for (const HarmonicLine& line : *lines) {
      EXPECT_GT(line.ratio, 0.5) << "seed " << seed << " order " << line.order;
      EXPECT_LT(line.ratio, 2.0) << "seed " << seed << " order " << line.order;
    }
  }
}

TEST(EnvelopeSpectrum, RejectsBadOptionsNamingTheField) {
  std::vector<double> x(1024, 0.0);
  EnvelopeOptions options;
  options.sample_rate_hz = 12800.0;
  options.band_low_hz = 2000.0;
  options.band_high_hz = 9000.0;
  Result<AveragedSpectrum> spectrum = EnvelopeSpectrum(x, options);
  ASSERT_FALSE(spectrum.ok());
  EXPECT_THAT(spectrum.message(), HasSubstr("band_high_hz 9000 must not exceed fs/2 6400"));
  options.band_high_hz = 1000.0;
  EXPECT_THAT(options.Validate().message(), HasSubstr("band_high_hz 1000 must be greater than"));
  options.band_high_hz = 4000.0;
  options.overlap = options.segment_length;
  EXPECT_THAT(options.Validate().message(), HasSubstr("overlap 8192"));
  x[5] = std::nan("");
  Result<std::vector<std::complex<double>>> z = AnalyticBandSignal(x, 12800.0, 2000.0, 4000.0);
  ASSERT_FALSE(z.ok());
  EXPECT_THAT(z.message(), HasSubstr("sample 5 is nan"));
  LineSearch search;
  search.frequency_hz = -3.0;
  EXPECT_THAT(search.Validate().message(), HasSubstr("frequency_hz -3"));
}

}  // namespace
}  // namespace spinward::estimators

namespace spinward::estimators {
namespace {

TEST(SpectralKurtosis, SteadyToneIsMinusOneAndGaussianNoiseNearZero) {
  // Antoni (MSSP 20, 2006): a stationary tone has |X| constant over frames, so
  // <|X|^4>/<|X|^2>^2 = 1 and SK = -1; circular Gaussian |X|^2 is exponential, <|X|^4> = 2
  // <|X|^2>^2, SK = 0.
  constexpr double kFs = 4096.0;
  std::vector<double> x(65536);
  std::mt19937 rng(7);
  std::normal_distribution<double> noise(0.0, 1.0);
  for (std::size_t i = 0; i < x.size(); ++i) {
    // The tone at 512 Hz is 100 times the noise amplitude: its bin is the tone's.
    x[i] = 100.0 * std::cos(2.0 * kPi * 512.0 * static_cast<double>(i) / kFs) + noise(rng);
  }
  Result<SpectralKurtosis> sk = ComputeSpectralKurtosis(x, kFs, 256, 128);
  ASSERT_TRUE(sk.ok()) << sk.message();
  EXPECT_EQ(sk->frames, 511u);  // (65536 - 256) / 128 + 1
  EXPECT_EQ(sk->FrequencyHz(32), 512.0);
  EXPECT_NEAR(sk->values[32], -1.0, 0.01);  // noise perturbs |X| by about 1e-3 of the tone's
  // Noise bins away from the tone's lobe: the mean over ~80 bins of SK estimates from 511 frames
  // scatters by about sqrt(4/511)/sqrt(80) = 0.01 (variance of the SK estimate ~4/K, from memory).
  double mean = 0.0;
  int count = 0;
  for (std::size_t k = 40; k < 120; ++k, ++count) mean += sk->values[k];
  mean /= count;
  EXPECT_NEAR(mean, 0.0, 0.05);
}

TEST(SpectralKurtosis, PicksTheResonanceThatTheFaultRings) {
  // The synthetic fault rings a 3 kHz resonance; the largest SK must fall in the band around it,
  // and the healthy signal's SK there stays near 0.
  Result<SpectralKurtosis> fault =
      ComputeSpectralKurtosis(PumpBearingSignal(true, 20261202), 25600.0, 128, 32);
  ASSERT_TRUE(fault.ok()) << fault.message();
  std::size_t best = 1;
  for (std::size_t k = 1; k + 1 < fault->values.size(); ++k) {
    if (fault->values[k] > fault->values[best]) best = k;
  }
  EXPECT_GT(fault->FrequencyHz(best), 2000.0);
  EXPECT_LT(fault->FrequencyHz(best), 4000.0);
  Result<SpectralKurtosis> healthy =
      ComputeSpectralKurtosis(PumpBearingSignal(false, 1), 25600.0, 128, 32);
  ASSERT_TRUE(healthy.ok()) << healthy.message();
  const std::size_t resonance_bin = 15;  // 3000 Hz / 200 Hz bins
  // Measured: fault 0.65 at 3 kHz (also its maximum), healthy 0.00. SK from ~3200 overlapping
  // frames scatters by a few hundredths on noise (variance ~4/K, from memory), so 0.4 and +-0.2
  // leave wide margins both ways. Frames of 5 ms are shorter than the 11.2 ms between impacts: SK
  // needs frames with and without an impact (longer frames, e.g. 10 ms, measured about 0 here).
  EXPECT_GT(fault->values[resonance_bin], 0.4);
  EXPECT_NEAR(healthy->values[resonance_bin], 0.0, 0.2);
}

TEST(SpectralKurtosis, RejectsBadFramesNamingTheField) {
  std::vector<double> x(1000, 1.0);
  EXPECT_THAT(ComputeSpectralKurtosis(x, 1000.0, 2, 1).message(), HasSubstr("frame_length 2"));
  EXPECT_THAT(ComputeSpectralKurtosis(x, 1000.0, 256, 300).message(), HasSubstr("hop 300"));
  EXPECT_THAT(ComputeSpectralKurtosis(x, 1000.0, 800, 400).message(),
              HasSubstr("block of 1000 samples holds fewer than 2 frames"));
}

}  // namespace
}  // namespace spinward::estimators
