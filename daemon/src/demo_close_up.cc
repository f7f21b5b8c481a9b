// The demo's close-up of pump P-101 (see demo_close_up.h): the recording goes through the same
// reader and analysis as `spinward analyze`, so the demo exercises the file path end to end.
#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <string>
#include <system_error>
#include <vector>

#include "analysis_report.h"
#include "demo_close_up.h"
#include "demo_signal.h"
#include "recording_analysis.h"
#include "spinward/daemon/recording_reader.h"
#include "wav_writer.h"

namespace spinward::daemon {
namespace {

namespace est = spinward::estimators;
namespace fs = std::filesystem;

constexpr double kSensitivityVoltsPerG = 0.100;  // a common general-purpose accelerometer
constexpr std::size_t kSegment = 16384;          // 1.5625 Hz bins at 25.6 kHz

std::string Hz(double hz) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.1f Hz", hz);
  return buffer;
}

int Fail(const std::string& message, int code) {
  std::fprintf(stderr, "spinward demo: %s\n", message.c_str());
  return code;
}

struct Line {
  double hz = 0.0;
  double rms_mm_s = 0.0;
  std::string label;
};

// What a line at `hz` is, for the demo's own machine: an order of shaft speed, the vane pass or
// the bearing's outer-race ball pass, within one bin.
std::string LabelFor(double hz, const PumpSignalSpec& spec, double bin_hz) {
  const double tolerance = bin_hz;
  if (std::abs(hz - spec.VanePassHz()) <= tolerance) {
    return std::to_string(spec.vane_count) + "x vane pass";
  }
  for (int k = 1; k <= 4; ++k) {
    if (std::abs(hz - k * spec.BpfoHz()) <= tolerance) {
      return (k == 1 ? std::string("") : std::to_string(k) + "x ") + "BPFO (outer race)";
    }
  }
  const double order = hz / spec.ShaftHz();
  if (std::abs(order - std::round(order)) * spec.ShaftHz() <= tolerance && order >= 0.5) {
    return std::to_string(static_cast<int>(std::round(order))) + "x shaft";
  }
  return "";
}

// The strongest lines of the velocity spectrum between 10 and 1000 Hz: bins that top their
// neighbours within +-3 bins. A line's RMS comes from the density over +-2 bins (the Hann main
// lobe), its frequency from the power-weighted centre of those bins (finer than one bin).
std::vector<Line> StrongestLines(const Analysis& analysis, const PumpSignalSpec& spec,
                                 std::size_t count) {
  const auto& velocity = analysis.spectrum;
  const auto& p = velocity.values;
  const double df = velocity.BinWidthHz();
  constexpr std::size_t kReach = 3;
  std::vector<Line> lines;
  for (std::size_t m = kReach; m + kReach < p.size(); ++m) {
    const double f = velocity.FrequencyHz(m);
    if (f < 10.0 || f > 1000.0) continue;
    bool peak = true;
    for (std::size_t k = m - kReach; k <= m + kReach && peak; ++k) {
      peak = k == m || (k < m ? p[k] < p[m] : p[k] <= p[m]);
    }
    if (!peak) continue;
    double weight = 0.0;
    double moment = 0.0;
    for (std::size_t k = m - 2; k <= m + 2; ++k) {
      weight += p[k];
      moment += p[k] * velocity.FrequencyHz(k);
    }
    est::BandSpec band;
    band.name = "line";
    band.lo_hz = f - 2.5 * df;
    band.hi_hz = f + 2.5 * df;
    band.unit = est::Unit::kMillimetresPerSecond;
    auto value = est::IntegrateBand(analysis.density, band, analysis.input_unit);
    if (!value.ok()) continue;
    const double centre = weight > 0.0 ? moment / weight : f;
    lines.push_back({centre, value->rms, LabelFor(centre, spec, df)});
  }
  std::sort(lines.begin(), lines.end(),
            [](const Line& a, const Line& b) { return a.rms_mm_s > b.rms_mm_s; });
  if (lines.size() > count) lines.resize(count);
  return lines;
}

Status WriteText(const fs::path& path, const std::string& text) {
  std::FILE* file = std::fopen(path.string().c_str(), "wb");
  if (file == nullptr) return Status::Fail(path.string() + ": cannot open for writing");
  const bool written = std::fwrite(text.data(), 1, text.size(), file) == text.size();
  const bool closed = std::fclose(file) == 0;
  if (!written || !closed) return Status::Fail(path.string() + ": write failed");
  return Status::Ok();
}

}  // namespace

int RecordingCloseUp(const fs::path& dir, double seconds, const PumpSignalSpec& spec) {
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) return Fail(dir.string() + ": cannot create directory: " + ec.message(), 1);

  auto generator = PumpSignalGenerator::Create(spec);
  if (!generator.ok()) return Fail(generator.message(), 1);
  std::vector<double> volts(static_cast<std::size_t>(std::llround(seconds * spec.sample_rate_hz)));
  generator->Generate(volts);
  for (double& v : volts) v = v / est::kStandardGravity * kSensitivityVoltsPerG;

  const fs::path wav = dir / "p101_de_radial.wav";
  if (Status written = WriteWavPcm24(wav, volts, spec.sample_rate_hz); !written.ok()) {
    return Fail(written.message(), 1);
  }
  auto recording = ReadRecording(wav, {});
  if (!recording.ok()) return Fail(recording.message(), 1);

  AnalysisOptions options;
  options.welch.segment_length = kSegment;
  options.welch.overlap = kSegment / 2;
  options.sensitivity = est::Sensitivity{kSensitivityVoltsPerG, est::Unit::kG};
  options.spectrum_unit = est::Unit::kMillimetresPerSecond;
  options.bands.push_back({"velocity 10-1000 Hz", 10.0, 1000.0, est::Unit::kMillimetresPerSecond});
  options.bands.push_back({"bearing resonance 2-5 kHz", 2000.0, 5000.0, est::Unit::kG});
  auto analysis = AnalyzeRecording(*recording, options);
  if (!analysis.ok()) return Fail(analysis.message(), 1);

  const fs::path csv = dir / "p101_de_radial_psd.csv";
  const fs::path json = dir / "p101_de_radial_analysis.json";
  if (Status s = WriteText(csv, FormatAnalysisCsv(*analysis)); !s.ok()) return Fail(s.message(), 1);
  if (Status s = WriteText(json, FormatAnalysisJson(*analysis, *recording, options)); !s.ok()) {
    return Fail(s.message(), 1);
  }

  const auto& velocity_band = analysis->bands[0];
  const auto& bearing_band = analysis->bands[1];
  std::printf(
      "Close-up: pump P-101, drive-end bearing, radial, as it runs at the end of the day\n");
  std::printf("(synthetic signal of an invented machine: %.0f rpm, %d-vane impeller)\n\n",
              spec.shaft_rpm, spec.vane_count);
  std::printf("  overall velocity  %.2f mm/s RMS, 10-1000 Hz\n", velocity_band.value.rms);
  std::printf("  bearing band      %.3f g RMS, 2-5 kHz (outer-race ball pass %.1f Hz)\n",
              bearing_band.value.rms, spec.BpfoHz());
  std::printf("  strongest lines   (velocity RMS over the line's bins)\n");
  for (const auto& line : StrongestLines(*analysis, spec, 5)) {
    std::printf("    %10s  %5.2f mm/s  %s\n", Hz(line.hz).c_str(), line.rms_mm_s,
                line.label.c_str());
  }
  std::printf("\n  recording  %s (%.0f s, 24-bit, %.0f mV/g)\n", wav.string().c_str(), seconds,
              kSensitivityVoltsPerG * 1000.0);
  std::printf("  spectrum   %s (velocity PSD, (mm/s)^2/Hz, %zu segments of %zu)\n",
              csv.string().c_str(), analysis->spectrum.segment_count, kSegment);
  std::printf("  analysis   %s\n", json.string().c_str());
  std::printf(
      "  again by hand: spinward analyze %s --sensitivity \"100 mV/g\" --segment %zu "
      "--quantity velocity --band 10:1000\n\n",
      wav.string().c_str(), kSegment);
  return 0;
}

}  // namespace spinward::daemon
