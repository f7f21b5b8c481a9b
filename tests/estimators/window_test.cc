// Window coefficients against scipy.signal.get_window (SciPy 1.10, called live), and the window
// figures against textbook values (REFERENCE_VALUES.md, "Windows": common practice values).
#include "spinward/estimators/window.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <numeric>
#include <vector>

#include "estimators/scipy_reference.h"

namespace spinward::estimators {
namespace {

Window MakeOrDie(WindowSpec spec, std::size_t length) {
  Result<Window> w = Window::Make(spec, length);
  EXPECT_TRUE(w.ok()) << w.message();
  return std::move(w).value();
}

TEST(Window, CoefficientsMatchScipyGetWindow) {
  std::vector<WindowSpec> specs;
  std::vector<std::size_t> lengths;
  const WindowKind kinds[] = {WindowKind::kRectangular,    WindowKind::kHann,
                              WindowKind::kHamming,        WindowKind::kBlackman,
                              WindowKind::kBlackmanHarris, WindowKind::kFlatTop,
                              WindowKind::kKaiser};
  for (WindowKind kind : kinds) {
    for (WindowSymmetry symmetry : {WindowSymmetry::kPeriodic, WindowSymmetry::kSymmetric}) {
      for (std::size_t length : {2, 7, 64, 255, 1000}) {
        specs.push_back({kind, symmetry, kind == WindowKind::kKaiser ? 8.6 : 14.0});
        lengths.push_back(length);
      }
    }
  }
  specs.push_back({WindowKind::kKaiser, WindowSymmetry::kPeriodic, 0.0});  // beta 0: rectangular
  lengths.push_back(16);
  specs.push_back({WindowKind::kKaiser, WindowSymmetry::kSymmetric, 38.0});
  lengths.push_back(129);

  const auto reference = spinward::testing::ScipyGetWindows(specs, lengths);
  ASSERT_TRUE(reference.ok) << reference.error;
  ASSERT_EQ(reference.windows.size(), specs.size());
  for (std::size_t i = 0; i < specs.size(); ++i) {
    const Window w = MakeOrDie(specs[i], lengths[i]);
    const std::vector<double>& expected = reference.windows[i];
    ASSERT_EQ(w.size(), expected.size()) << ToString(specs[i]);
    for (std::size_t n = 0; n < expected.size(); ++n) {
      // Both compute the same cosines; they differ only in rounding (SciPy evaluates the phase
      // with numpy.linspace), a few ulp of the window's unit peak.
      EXPECT_NEAR(w.coefficients()[n], expected[n], 1e-14)
          << ToString(specs[i]) << " length " << lengths[i] << " sample " << n;
    }
    // Sums are signed: SciPy's flat-top dips below zero, so sum(|w|) would differ from sum(w).
    const double expected_sum = std::accumulate(expected.begin(), expected.end(), 0.0);
    EXPECT_NEAR(w.sum(), expected_sum, 1e-12) << ToString(specs[i]);
  }
}

TEST(Window, FlatTopHasNegativeSamples) {
  // scipy.signal.get_window('flattop', 64) has negative values near both ends (its a2 - a1 + ...
  // sum of the five coefficients is -0.000421). A window routine that clipped or took magnitudes
  // would lose them.
  const Window w = MakeOrDie({WindowKind::kFlatTop}, 64);
  const double lowest = *std::min_element(w.coefficients().begin(), w.coefficients().end());
  EXPECT_LT(lowest, 0.0);
  EXPECT_NEAR(w.coefficients()[0],
              0.21557895 - 0.41663158 + 0.277263158 - 0.083578947 + 0.006947368,
              1e-15);  // scipy's flattop coefficients at n = 0
}

TEST(Window, EnbwAndCoherentGainMatchTextbookValues) {
  // REFERENCE_VALUES.md "Windows" (common practice, textbook values): ENBW in bins rectangular 1.0,
  // Hann 1.5, Hamming 1.363, Blackman-Harris 4-term 2.004, flat-top ~3.77; coherent gain
  // rectangular 1.0, Hann 0.5, Hamming 0.54. The tolerances are the precision the values are quoted
  // to.
  const std::size_t length = 4096;
  EXPECT_NEAR(MakeOrDie({WindowKind::kRectangular}, length).enbw_bins(), 1.0, 1e-12);
  EXPECT_NEAR(MakeOrDie({WindowKind::kHann}, length).enbw_bins(), 1.5, 1e-9);
  EXPECT_NEAR(MakeOrDie({WindowKind::kHamming}, length).enbw_bins(), 1.363, 5e-4);
  EXPECT_NEAR(MakeOrDie({WindowKind::kBlackmanHarris}, length).enbw_bins(), 2.004, 5e-4);
  EXPECT_NEAR(MakeOrDie({WindowKind::kFlatTop}, length).enbw_bins(), 3.77, 5e-3);

  EXPECT_NEAR(MakeOrDie({WindowKind::kRectangular}, length).coherent_gain(), 1.0, 1e-12);
  EXPECT_NEAR(MakeOrDie({WindowKind::kHann}, length).coherent_gain(), 0.5, 1e-12);
  EXPECT_NEAR(MakeOrDie({WindowKind::kHamming}, length).coherent_gain(), 0.54, 1e-12);
}

TEST(Window, CorrectionFactorsOfHann) {
  // Hann (common practice, textbook): amplitude correction 1 / 0.5 = 2; mean of w^2 is 3/8, so the
  // energy correction is sqrt(8/3) = 1.633.
  const Window w = MakeOrDie({WindowKind::kHann}, 1024);
  EXPECT_NEAR(w.amplitude_correction(), 2.0, 1e-12);
  EXPECT_NEAR(w.energy_correction(), std::sqrt(8.0 / 3.0), 1e-12);
  EXPECT_NEAR(w.sum_of_squares(), 1024.0 * 3.0 / 8.0, 1e-9);
}

TEST(Window, EnbwInHzDoesNotDependOnZeroPadding) {
  // ENBW in Hz = ENBW in bins x fs / L (textbook definition); zero-padding to M = 4L makes bins
  // four times narrower, so the same bandwidth spans four times as many of them.
  const Window w = MakeOrDie({WindowKind::kHann}, 1000);
  EXPECT_NEAR(w.enbw_hz(2000.0), 1.5 * 2000.0 / 1000.0, 1e-9);
  EXPECT_NEAR(w.enbw_fft_bins(4000), 1.5 * 4.0, 1e-9);
}

TEST(Window, SymmetricHannEndsAtZeroPeriodicDoesNotRepeat) {
  // Definition (scipy.signal.windows.hann docs): the symmetric window is zero at both ends; the
  // periodic one is zero at n = 0 only, its last sample being the one before the period's end.
  const Window symmetric = MakeOrDie({WindowKind::kHann, WindowSymmetry::kSymmetric}, 9);
  const Window periodic = MakeOrDie({WindowKind::kHann, WindowSymmetry::kPeriodic}, 8);
  EXPECT_NEAR(symmetric.coefficients()[8], 0.0, 1e-15);
  EXPECT_NEAR(periodic.coefficients()[0], 0.0, 1e-15);
  EXPECT_NEAR(periodic.coefficients()[7], 0.5 - 0.5 * std::cos(2.0 * M_PI * 7.0 / 8.0), 1e-15);
  for (std::size_t n = 0; n < 8; ++n) {
    EXPECT_NEAR(periodic.coefficients()[n], symmetric.coefficients()[n], 1e-15) << n;
  }
}

TEST(Window, ParsesNamesAndForms) {
  Result<WindowSpec> kaiser = ParseWindowSpec("kaiser:8.6,symmetric");
  ASSERT_TRUE(kaiser.ok()) << kaiser.message();
  EXPECT_EQ(kaiser->kind, WindowKind::kKaiser);
  EXPECT_EQ(kaiser->kaiser_beta, 8.6);
  EXPECT_EQ(kaiser->symmetry, WindowSymmetry::kSymmetric);
  EXPECT_EQ(ToString(*kaiser), "kaiser:8.6,symmetric");

  Result<WindowSpec> boxcar = ParseWindowSpec("boxcar");
  ASSERT_TRUE(boxcar.ok());
  EXPECT_EQ(boxcar->kind, WindowKind::kRectangular);
  EXPECT_EQ(boxcar->symmetry, WindowSymmetry::kPeriodic);

  for (const char* name : {"hann", "hamming", "blackman", "blackmanharris", "flattop",
                           "rectangular", "kaiser:0.5", "flattop,symmetric"}) {
    Result<WindowSpec> spec = ParseWindowSpec(name);
    ASSERT_TRUE(spec.ok()) << name << ": " << spec.message();
    EXPECT_EQ(ToString(*spec), name);
  }
}

TEST(Window, BadSpecsAreNamedWithTheirValue) {
  EXPECT_NE(ParseWindowSpec("hanning").message().find("'hanning'"), std::string::npos);
  EXPECT_NE(ParseWindowSpec("hann,mirrored").message().find("'mirrored'"), std::string::npos);
  EXPECT_NE(ParseWindowSpec("kaiser:abc").message().find("'abc'"), std::string::npos);
  EXPECT_NE(ParseWindowSpec("kaiser:-2").message().find("-2"), std::string::npos);
  EXPECT_FALSE(ParseWindowSpec("kaiser").ok());

  Result<Window> empty = Window::Make({WindowKind::kHann}, 0);
  ASSERT_FALSE(empty.ok());
  EXPECT_NE(empty.message().find("length 0"), std::string::npos) << empty.message();
  Result<Window> nan_beta = Window::Make({WindowKind::kKaiser, WindowSymmetry::kPeriodic, NAN}, 8);
  ASSERT_FALSE(nan_beta.ok());
  EXPECT_NE(nan_beta.message().find("kaiser_beta nan"), std::string::npos) << nan_beta.message();
}

}  // namespace
}  // namespace spinward::estimators
