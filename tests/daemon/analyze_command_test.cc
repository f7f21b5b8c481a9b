// `spinward analyze` end to end: the built binary on files written by SciPy/numpy
// (tests/reference/recording_reference.py, Debian's /usr/bin/python3), its CSV spectrum compared
// bin by bin with scipy.signal.welch on the same file, band values against handbook figures, and
// its one-line errors with their exit codes.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::CommandResult;
using spinward::testing::FreshTempDir;
using spinward::testing::ReferencePython;
using spinward::testing::RunCommand;
using spinward::testing::SourceDir;
using spinward::testing::SpinwardBinary;
using spinward::testing::TestDataDir;

std::string Script() { return (SourceDir() / "tests/reference/recording_reference.py").string(); }

void RunPython(const std::string& arguments) {
  const CommandResult result = RunCommand(ReferencePython() + " " + Script() + " " + arguments);
  ASSERT_EQ(result.exit_code, 0) << arguments << "\n" << result.error_output;
}

CommandResult Analyze(const std::string& arguments) {
  return RunCommand(SpinwardBinary().string() + " analyze " + arguments);
}

struct Spectrum {
  std::vector<double> frequency;
  std::vector<double> psd;
};

// spinward's CSV: "frequency_hz,psd", rows, then (with bands) a blank line and the band table.
Spectrum ParseSpinwardCsv(const std::string& text, std::vector<std::string>* band_rows = nullptr) {
  Spectrum spectrum;
  std::istringstream in(text);
  std::string line;
  std::getline(in, line);
  EXPECT_EQ(line, "frequency_hz,psd");
  while (std::getline(in, line) && !line.empty()) {
    const auto comma = line.find(',');
    spectrum.frequency.push_back(std::stod(line.substr(0, comma)));
    spectrum.psd.push_back(std::stod(line.substr(comma + 1)));
  }
  if (band_rows != nullptr) {
    while (std::getline(in, line)) band_rows->push_back(line);
  }
  return spectrum;
}

Spectrum ScipyWelch(const fs::path& file, const std::string& arguments) {
  const CommandResult result =
      RunCommand(ReferencePython() + " " + Script() + " welch " + file.string() + " " + arguments);
  EXPECT_EQ(result.exit_code, 0) << result.error_output;
  Spectrum spectrum;
  std::istringstream in(result.output);
  double f = 0.0;
  double p = 0.0;
  while (in >> f >> p) {
    spectrum.frequency.push_back(f);
    spectrum.psd.push_back(p);
  }
  return spectrum;
}

struct WelchCase {
  const char* name;
  const char* file;  // "signal.wav" (float32, scipy.io.wavfile) or "signal.csv" (time_s,accel)
  const char* spinward_options;
  const char* scipy_options;
};

class AnalyzeMatchesScipy : public ::testing::TestWithParam<WelchCase> {};

// The spectrum printed with 17 digits must equal scipy.signal.welch on the same file to 1e-9
// relative per bin. Bins far below the peak carry FFT round-off of the peak's energy (about 1e-16
// of it), so each bin's tolerance has a floor tied to the peak: 1e-9 x max(|scipy|, 1e-6 x peak).
TEST_P(AnalyzeMatchesScipy, EveryBin) {
  const WelchCase& c = GetParam();
  const fs::path dir = FreshTempDir(std::string("analyze-") + c.name);
  const fs::path file = dir / c.file;
  // 2000 Hz, 8 s: sines at 50 and 317.3 Hz, white noise, a small offset (see the script).
  RunPython("write-signal " + file.string() + " 2000 8 5");
  const CommandResult result = Analyze(file.string() + " " + c.spinward_options);
  ASSERT_EQ(result.exit_code, 0) << result.error_output;
  const Spectrum ours = ParseSpinwardCsv(result.output);
  const Spectrum scipy = ScipyWelch(file, c.scipy_options);
  ASSERT_GT(scipy.psd.size(), 100u);
  ASSERT_EQ(ours.psd.size(), scipy.psd.size());
  const double peak = *std::max_element(scipy.psd.begin(), scipy.psd.end());
  double worst = 0.0;
  for (std::size_t m = 0; m < scipy.psd.size(); ++m) {
    EXPECT_NEAR(ours.frequency[m], scipy.frequency[m], 1e-12 * 1000.0) << "bin " << m;
    const double scale = std::max(std::abs(scipy.psd[m]), 1e-6 * peak);
    const double error = std::abs(ours.psd[m] - scipy.psd[m]) / scale;
    worst = std::max(worst, error);
    ASSERT_LE(error, 1e-9) << "bin " << m << " ours " << ours.psd[m] << " scipy " << scipy.psd[m];
  }
  char measured[32];
  std::snprintf(measured, sizeof measured, "%.3e", worst);
  RecordProperty("worst_relative_error", measured);
}

INSTANTIATE_TEST_SUITE_P(
    Analyze, AnalyzeMatchesScipy,
    ::testing::Values(
        WelchCase{"flattop_spectrum", "signal.wav",
                  "--window flattop --scaling spectrum --segment 1024 --overlap 50%",
                  "window=flattop scaling=spectrum nperseg=1024 noverlap=512"},
        WelchCase{"median_linear", "signal.wav",
                  "--average median --window hamming --detrend linear --segment 500 --overlap 100",
                  "average=median window=hamming detrend=linear nperseg=500 noverlap=100"},
        WelchCase{"zero_padded_band", "signal.csv",
                  "--window blackmanharris --segment 1000 --fft-length 2048 --overlap 250 "
                  "--band 10:200",
                  "window=blackmanharris nperseg=1000 nfft=2048 noverlap=250"},
        WelchCase{"two_sided_kaiser", "signal.csv",
                  "--window kaiser:8 --sides two --detrend none --segment 256 --overlap 0",
                  "window=kaiser:8 sides=two detrend=none nperseg=256 noverlap=0"}),
    [](const auto& param_info) { return std::string(param_info.param.name); });

TEST(Analyze, BandHoldsTheSinesMeanSquare) {
  // The script's signal has a 2.0-amplitude sine at 50 Hz: RMS 2 / sqrt(2) (trade fact). The 317 Hz
  // sine lies outside 10-200 Hz; white noise of sigma 0.05 over a 1000 Hz Nyquist puts
  // 0.05^2 x 190 / 1000 = 4.75e-4 (m/s^2)^2 into the band (one-sided density 2 s^2 / fs).
  const fs::path file = FreshTempDir("analyze-band") / "signal.csv";
  RunPython("write-signal " + file.string() + " 2000 8 5");
  const CommandResult result =
      Analyze(file.string() + " --segment 1000 --fft-length 2048 --band mains=10:200");
  ASSERT_EQ(result.exit_code, 0) << result.error_output;
  std::vector<std::string> bands;
  ParseSpinwardCsv(result.output, &bands);
  ASSERT_EQ(bands.size(), 2u);
  EXPECT_EQ(bands[0], "band,lo_hz,hi_hz,unit,rms");
  ASSERT_EQ(bands[1].rfind("mains,10,200,m/s^2,", 0), 0u) << bands[1];
  const double rms = std::stod(bands[1].substr(bands[1].rfind(',') + 1));
  EXPECT_NEAR(rms, std::sqrt(2.0 + 4.75e-4), 2e-3 * std::sqrt(2.0));
}

TEST(Analyze, VelocityOfTenMetresPerSecondSquaredAtOneThousandRadians) {
  // 10 m/s^2 RMS at omega = 1000 rad/s is 10 mm/s RMS: v = a / omega (handbook integration).
  const fs::path file = FreshTempDir("analyze-velocity") / "sine.csv";
  RunPython("write-sine " + file.string() + " 4000 4 159.15494309189535 14.142135623730951");
  const CommandResult result = Analyze(file.string() +
                                       " --segment 4000 --quantity velocity --units mm/s "
                                       "--band 10:1000 --format json");
  ASSERT_EQ(result.exit_code, 0) << result.error_output;
  const auto at = result.output.find("\"rms\": ", result.output.find("\"bands\""));
  ASSERT_NE(at, std::string::npos) << result.output.substr(0, 2000);
  EXPECT_NEAR(std::stod(result.output.substr(at + 7)), 10.0, 0.01);
  EXPECT_NE(result.output.find("\"psd_unit\": \"(mm/s)^2/Hz\""), std::string::npos);
}

TEST(Analyze, SensitivityTurnsVoltsIntoG) {
  // 1 g RMS at 100 Hz is 15.608 mm/s RMS (g = 9.80665 m/s^2, v = a / (2 pi f)); a 100 mV/g sensor
  // gives 0.1 V RMS for it, so the file holds a 0.1 sqrt(2) V amplitude sine.
  const fs::path file = FreshTempDir("analyze-sensitivity") / "volts.wav";
  RunPython("write-sine " + file.string() + " 8000 4 100 0.14142135623730951");
  const CommandResult result = Analyze(file.string() +
                                       " --sensitivity '100 mV/g' --segment 8000 "
                                       "--quantity velocity --band 10:1000");
  ASSERT_EQ(result.exit_code, 0) << result.error_output;
  const std::string& out = result.output;
  const double rms = std::stod(out.substr(out.rfind(',') + 1));
  EXPECT_NEAR(rms, 15.608, 0.02);  // float32 samples: the file itself rounds to ~1e-7
}

TEST(Analyze, JsonCarriesSegmentCountAndSettings) {
  // SciPy's segment count: K = floor((N - D) / H); N = 16000, L = 1024, D = 512: K = 30.
  const fs::path file = FreshTempDir("analyze-json") / "signal.wav";
  RunPython("write-signal " + file.string() + " 2000 8 5");
  const CommandResult result =
      Analyze(file.string() + " --segment 1024 --window flattop --format json --band 40:60");
  ASSERT_EQ(result.exit_code, 0) << result.error_output;
  for (const char* expected :
       {"\"segment_count\": 30", "\"segment_length\": 1024", "\"overlap\": 512",
        "\"fft_length\": 1024", "\"window\": \"flattop\"", "\"scaling\": \"density\"",
        "\"sides\": \"one\"", "\"averaging\": \"mean\"", "\"sample_rate_hz\": 2000",
        "\"kurtosis\": ", "\"name\": \"40-60 Hz\"", "\"unit\": \"m/s^2\""}) {
    EXPECT_NE(result.output.find(expected), std::string::npos) << expected;
  }
}

TEST(Analyze, OutFileHoldsWhatStdoutWould) {
  const fs::path dir = FreshTempDir("analyze-out");
  const fs::path file = dir / "signal.csv";
  RunPython("write-signal " + file.string() + " 2000 2 5");
  const CommandResult to_stdout = Analyze(file.string() + " --segment 512");
  const CommandResult to_file =
      Analyze(file.string() + " --segment 512 --out " + (dir / "psd.csv").string());
  ASSERT_EQ(to_file.exit_code, 0) << to_file.error_output;
  EXPECT_TRUE(to_file.output.empty());
  std::ifstream in(dir / "psd.csv");
  std::stringstream written;
  written << in.rdbuf();
  EXPECT_EQ(written.str(), to_stdout.output);
}

struct ErrorCase {
  const char* name;
  const char* arguments;  // FILE is substituted for {csv}, {wav} or {data}
  int exit_code;
  const char* message;  // the whole stderr line, after the same substitution
};

class AnalyzeErrors : public ::testing::TestWithParam<ErrorCase> {};

std::string Substitute(std::string text, const std::string& key, const std::string& value) {
  for (auto at = text.find(key); at != std::string::npos; at = text.find(key, at + value.size())) {
    text.replace(at, key.size(), value);
  }
  return text;
}

// One line on stderr naming the problem, nothing on stdout, exit 2 for usage and 1 for the file.
TEST_P(AnalyzeErrors, OneLineAndExitCode) {
  const ErrorCase& c = GetParam();
  static const fs::path dir = [] {
    const fs::path d = FreshTempDir("analyze-errors");
    const CommandResult r = RunCommand(ReferencePython() + " " + Script() + " write-signal " +
                                       (d / "signal.csv").string() + " 2000 1 5");
    EXPECT_EQ(r.exit_code, 0) << r.error_output;
    return d;
  }();
  auto fill = [&](std::string text) {
    text = Substitute(text, "{csv}", (dir / "signal.csv").string());
    text = Substitute(text, "{wav}", (dir / "missing.wav").string());
    return Substitute(text, "{data}", (TestDataDir() / "recordings").string());
  };
  const CommandResult result = Analyze(fill(c.arguments));
  EXPECT_EQ(result.exit_code, c.exit_code);
  EXPECT_TRUE(result.output.empty()) << result.output.substr(0, 200);
  EXPECT_EQ(result.error_output, fill(c.message) + "\n");
}

INSTANTIATE_TEST_SUITE_P(
    Analyze, AnalyzeErrors,
    ::testing::Values(
        ErrorCase{"overlap_percent", "{csv} --overlap 120%", 2,
                  "spinward analyze: --overlap '120%': must be below 100%"},
        ErrorCase{"overlap_samples", "{csv} --segment 256 --overlap 256", 2,
                  "spinward analyze: --overlap '256': must be less than the segment (256)"},
        ErrorCase{"fft_shorter", "{csv} --segment 256 --fft-length 128", 2,
                  "spinward analyze: --fft-length '128': must be at least the segment (256)"},
        ErrorCase{"unknown_option", "{csv} --colour red", 2,
                  "spinward analyze: unknown option '--colour' (spinward analyze --help lists "
                  "them)"},
        ErrorCase{"missing_value", "{csv} --segment", 2,
                  "spinward analyze: --segment: needs a value"},
        ErrorCase{"segment_text", "{csv} --segment 1k", 2,
                  "spinward analyze: --segment '1k': must be a whole number from 2"},
        ErrorCase{"no_file", "--segment 256", 2,
                  "spinward analyze: no FILE given (spinward analyze --help)"},
        ErrorCase{"format", "{csv} --format xml", 2,
                  "spinward analyze: --format 'xml': must be csv or json"},
        ErrorCase{"differentiate", "{csv} --input-units mm/s --quantity acceleration", 2,
                  "spinward analyze: --quantity acceleration: the input is velocity (mm/s); "
                  "analyze integrates, it does not differentiate"},
        ErrorCase{"units_mismatch", "{csv} --quantity velocity --units g", 2,
                  "spinward analyze: --units 'g': is a unit of acceleration but --quantity is "
                  "velocity"},
        ErrorCase{"band_above_nyquist", "{csv} --segment 256 --band 10:1500", 2,
                  "spinward analyze: --band '10:1500': 1500 Hz is above the recording's "
                  "Nyquist frequency, 1000 Hz"},
        ErrorCase{"missing_file", "{wav}", 1, "spinward analyze: {wav}: no such file"},
        ErrorCase{"truncated_wav", "{data}/truncated_data.wav --segment 4", 1,
                  "spinward analyze: {data}/truncated_data.wav: data chunk declares 1000 bytes but "
                  "only 20 follow (truncated)"},
        ErrorCase{"bad_cell", "{data}/non_numeric.csv --rate 100 --segment 2", 1,
                  "spinward analyze: {data}/non_numeric.csv:5: column 'accel': 'n/a' is not a "
                  "number"},
        ErrorCase{"segment_too_long", "{csv} --segment 4096", 1,
                  "spinward analyze: {csv}: 2000 samples are fewer than one segment of 4096; "
                  "choose a shorter segment (--segment)"}),
    [](const auto& param_info) { return std::string(param_info.param.name); });

TEST(Analyze, HelpDocumentsEveryOption) {
  const CommandResult result = Analyze("--help");
  ASSERT_EQ(result.exit_code, 0);
  for (const char* option :
       {"--input-format",  "--rate",        "--channel", "--column",  "--raw-channels",
        "--input-units",   "--sensitivity", "--segment", "--overlap", "--fft-length",
        "--window",        "--detrend",     "--scaling", "--sides",   "--average",
        "--time-constant", "--quantity",    "--units",   "--band",    "--format",
        "--out",           "--help"}) {
    EXPECT_NE(result.output.find(std::string("  ") + option + " "), std::string::npos) << option;
    // Each documented option is also accepted (an unknown one would say so and exit 2).
    if (std::string(option) != "--help") {
      const CommandResult probe = Analyze(std::string(option) + "=x");
      EXPECT_EQ(probe.error_output.find("unknown option"), std::string::npos) << option;
    }
  }
}

}  // namespace
}  // namespace spinward::daemon
