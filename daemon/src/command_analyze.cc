// `spinward analyze FILE [options]`: the Welch PSD, band values and overall indicators of one
// recording, as CSV or JSON. Options are checked before the file is read, so a typo costs nothing;
// every failure is one line on stderr: exit 2 for a usage error, 1 for a file or runtime error.
#include <charconv>
#include <cmath>
#include <cstdio>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "analysis_report.h"
#include "commands.h"
#include "recording_analysis.h"
#include "spinward/daemon/recording_reader.h"

namespace spinward::daemon {
namespace {

namespace est = spinward::estimators;

constexpr std::string_view kUsage = R"usage(usage: spinward analyze FILE [options]

Computes the Welch power spectral density of one channel of a recording, with optional band values
(RMS over frequency bands) and overall time-domain indicators. FILE is a WAV (integer PCM 8/16/24/32
bit or float), CSV (one sample per line; a header may name columns and a time column) or raw
little-endian samples (.f32 float32, .s16 int16). Output goes to stdout unless --out is given.

input:
  --input-format F   auto (from the extension, default), wav, csv, f32, s16
  --rate HZ          sample rate; needed for raw files and CSV without a time column;
                     for WAV and CSV with a time column it overrides what the file says
  --channel N        channel to analyze (WAV/raw: interleaved channel; CSV: data column, the time
                     column not counted), from 0; default 0
  --column NAME      CSV: the data column with this header name
  --raw-channels N   raw: channels interleaved per frame; default 1
  --input-units U    unit of the samples: m/s^2 (default), g, or a velocity unit (mm/s, m/s, in/s)
  --sensitivity S    sensor sensitivity, e.g. "100 mV/g" or "10.2 mV/(m/s^2)": the samples are then
                     volts, and the sensitivity's unit is the input unit

spectrum (the defaults give scipy.signal.welch's defaults for the same segment):
  --segment N        samples per segment; default 4096
  --overlap D        overlap of consecutive segments, in samples or as a percentage of the segment
                     ("50%"); below the segment length; default 50%
  --fft-length M     FFT length, at least the segment (longer zero-pads); default the segment
  --window W         hann (default), hamming, blackman, blackmanharris, flattop, rectangular,
                     kaiser:BETA; append ",symmetric" for the symmetric form
  --detrend D        none, mean (default), linear: removed from each segment before the window
  --scaling S        density (default; unit^2/Hz) or spectrum (unit^2: a sine's line holds its
                     mean square)
  --sides S          one (default; positive frequencies, power folded in) or two (FFT order)
  --average A        mean (default), median (bias-corrected as SciPy does), exponential, peak
  --time-constant T  exponential averaging time constant in seconds; default 1

quantity and bands:
  --quantity Q       acceleration (default), velocity or displacement: the quantity of the printed
                     spectrum and of band values (integrated from acceleration by 1/(2 pi f)^k)
  --units U          unit of the printed spectrum and band values, e.g. mm/s, um, g; default: the
                     input unit for acceleration, mm/s for velocity, um for displacement
  --band LO:HI       a band from LO to HI Hz, as NAME=LO:HI to name it; repeat for more bands

output:
  --format F         csv (default): "frequency_hz,psd" rows, then a blank line and a
                     "band,lo_hz,hi_hz,unit,rms" table when bands are given;
                     json: settings, segment count, units, overall indicators, bands, spectrum
  --out FILE         write to FILE instead of stdout
  --help             this text

Exit status: 0 on success, 2 for a bad option, 1 when the file cannot be read or analyzed.
Spinward's figures are advisory: site maintenance rules and protection systems prevail.
)usage";

struct UsageError {
  std::string message;
};

struct Parsed {
  std::string file;
  ReadOptions read;
  AnalysisOptions analysis;
  std::size_t segment = 4096;
  std::optional<std::size_t> overlap_samples;
  double overlap_percent = 50.0;
  std::size_t fft_length = 0;
  std::optional<est::Quantity> quantity;
  std::optional<est::Unit> units;
  std::optional<est::Unit> input_units;
  std::vector<std::string> band_texts;
  bool json = false;
  std::string out;
  bool help = false;
};

std::string Quote(std::string_view option, std::string_view value) {
  return std::string(option) + " '" + std::string(value) + "'";
}

UsageError Bad(std::string_view option, std::string_view value, std::string_view problem) {
  return {Quote(option, value) + ": " + std::string(problem)};
}

std::optional<std::size_t> ParseCount(std::string_view text) {
  std::size_t value = 0;
  const auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (error != std::errc() || end != text.data() + text.size()) return std::nullopt;
  return value;
}

std::optional<double> ParseReal(std::string_view text) {
  double value = 0.0;
  const auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (text.empty() || error != std::errc() || end != text.data() + text.size() ||
      !std::isfinite(value)) {
    return std::nullopt;
  }
  return value;
}

// "LO:HI" or "NAME=LO:HI".
Result<est::BandSpec> ParseBand(std::string_view text) {
  est::BandSpec band;
  std::string_view range = text;
  if (const auto eq = text.find('='); eq != std::string_view::npos) {
    band.name = std::string(text.substr(0, eq));
    range = text.substr(eq + 1);
    if (band.name.empty()) return Error{"empty band name before '='"};
  }
  const auto colon = range.find(':');
  if (colon == std::string_view::npos) return Error{"expected LO:HI in Hz, e.g. 10:1000"};
  const auto lo = ParseReal(range.substr(0, colon));
  const auto hi = ParseReal(range.substr(colon + 1));
  if (!lo || !hi) return Error{"LO and HI must be numbers in Hz, e.g. 10:1000"};
  if (*lo < 0.0) return Error{"LO must be at least 0 Hz"};
  if (*hi <= *lo) return Error{"HI must be above LO"};
  band.lo_hz = *lo;
  band.hi_hz = *hi;
  if (band.name.empty()) {
    char name[64];
    std::snprintf(name, sizeof name, "%g-%g Hz", *lo, *hi);
    band.name = name;
  }
  return band;
}

// Splits "--name=value" and "--name value"; fills `parsed` or returns the usage error.
std::optional<UsageError> ParseArguments(const Arguments& args, Parsed& parsed) {
  for (std::size_t i = 0; i < args.size(); ++i) {
    std::string option = args[i];
    if (option == "--help" || option == "-h") {
      parsed.help = true;
      return std::nullopt;
    }
    if (option.rfind("--", 0) != 0 || option == "--") {
      if (option == "--" && i + 1 < args.size()) option = args[++i];
      if (!parsed.file.empty()) {
        return UsageError{"one FILE expected, got '" + parsed.file + "' and '" + option + "'"};
      }
      parsed.file = option;
      continue;
    }
    std::string value;
    bool has_value = false;
    if (const auto eq = option.find('='); eq != std::string::npos) {
      value = option.substr(eq + 1);
      option = option.substr(0, eq);
      has_value = true;
    }
    auto take = [&]() -> std::optional<UsageError> {
      if (has_value) return std::nullopt;
      if (i + 1 >= args.size()) return UsageError{option + ": needs a value"};
      value = args[++i];
      return std::nullopt;
    };
    static constexpr std::string_view kKnown[] = {
        "--input-format", "--rate",        "--channel",     "--column",
        "--raw-channels", "--input-units", "--sensitivity", "--segment",
        "--overlap",      "--fft-length",  "--window",      "--detrend",
        "--scaling",      "--sides",       "--average",     "--time-constant",
        "--quantity",     "--units",       "--band",        "--format",
        "--out"};
    bool known = false;
    for (auto name : kKnown) known = known || name == option;
    if (!known) {
      return UsageError{"unknown option '" + option + "' (spinward analyze --help lists them)"};
    }
    if (auto missing = take()) return missing;

    if (option == "--input-format") {
      auto format = ParseRecordingFormat(value);
      if (!format.ok()) return Bad(option, value, format.message());
      parsed.read.format = *format;
    } else if (option == "--rate") {
      const auto rate = ParseReal(value);
      if (!rate || *rate <= 0.0) return Bad(option, value, "must be a positive number of Hz");
      parsed.read.sample_rate_hz = *rate;
    } else if (option == "--channel") {
      const auto channel = ParseCount(value);
      if (!channel) return Bad(option, value, "must be a channel number from 0");
      parsed.read.channel = *channel;
    } else if (option == "--column") {
      if (value.empty()) return Bad(option, value, "must name a column");
      parsed.read.column = value;
    } else if (option == "--raw-channels") {
      const auto channels = ParseCount(value);
      if (!channels || *channels == 0) return Bad(option, value, "must be a whole number from 1");
      parsed.read.raw_channel_count = *channels;
    } else if (option == "--input-units") {
      auto unit = est::ParseUnit(value);
      if (!unit.ok()) return Bad(option, value, unit.message());
      if (est::QuantityOf(*unit) == est::Quantity::kDisplacement) {
        return Bad(option, value, "must be an acceleration or velocity unit (g, m/s^2, mm/s, ...)");
      }
      parsed.input_units = *unit;
    } else if (option == "--sensitivity") {
      auto sensitivity = est::Sensitivity::Parse(value);
      if (!sensitivity.ok()) return Bad(option, value, sensitivity.message());
      if (est::QuantityOf(sensitivity->unit) == est::Quantity::kDisplacement) {
        return Bad(option, value, "must be per unit of acceleration or velocity");
      }
      parsed.analysis.sensitivity = *sensitivity;
    } else if (option == "--segment") {
      const auto segment = ParseCount(value);
      if (!segment || *segment < 2) return Bad(option, value, "must be a whole number from 2");
      parsed.segment = *segment;
    } else if (option == "--overlap") {
      if (!value.empty() && value.back() == '%') {
        const auto percent = ParseReal(std::string_view(value).substr(0, value.size() - 1));
        if (!percent) return Bad(option, value, "must be a number of samples or a percentage");
        if (*percent < 0.0) return Bad(option, value, "must not be negative");
        if (*percent >= 100.0) return Bad(option, value, "must be below 100%");
        parsed.overlap_percent = *percent;
        parsed.overlap_samples.reset();
      } else {
        const auto samples = ParseCount(value);
        if (!samples) return Bad(option, value, "must be a number of samples or a percentage");
        parsed.overlap_samples = *samples;
      }
    } else if (option == "--fft-length") {
      const auto length = ParseCount(value);
      if (!length || *length == 0) return Bad(option, value, "must be a whole number of samples");
      parsed.fft_length = *length;
    } else if (option == "--window") {
      auto window = est::ParseWindowSpec(value);
      if (!window.ok()) return Bad(option, value, window.message());
      parsed.analysis.welch.window = *window;
    } else if (option == "--detrend") {
      auto detrend = est::ParseDetrend(value);
      if (!detrend.ok()) return Bad(option, value, detrend.message());
      parsed.analysis.welch.detrend = *detrend;
    } else if (option == "--scaling") {
      auto scaling = est::ParseScaling(value);
      if (!scaling.ok()) return Bad(option, value, scaling.message());
      parsed.analysis.welch.scaling = *scaling;
    } else if (option == "--sides") {
      auto sides = est::ParseSides(value);
      if (!sides.ok()) return Bad(option, value, sides.message());
      parsed.analysis.welch.sides = *sides;
    } else if (option == "--average") {
      auto averaging = est::ParseAveraging(value);
      if (!averaging.ok()) return Bad(option, value, averaging.message());
      parsed.analysis.welch.averaging = *averaging;
    } else if (option == "--time-constant") {
      const auto tau = ParseReal(value);
      if (!tau || *tau <= 0.0) return Bad(option, value, "must be a positive number of seconds");
      parsed.analysis.welch.exponential_time_constant_s = *tau;
    } else if (option == "--quantity") {
      auto quantity = est::ParseQuantity(value);
      if (!quantity.ok()) return Bad(option, value, quantity.message());
      parsed.quantity = *quantity;
    } else if (option == "--units") {
      auto unit = est::ParseUnit(value);
      if (!unit.ok()) return Bad(option, value, unit.message());
      parsed.units = *unit;
    } else if (option == "--band") {
      auto band = ParseBand(value);
      if (!band.ok()) return Bad(option, value, band.message());
      parsed.band_texts.push_back(value);
      parsed.analysis.bands.push_back(*band);
    } else if (option == "--format") {
      if (value != "csv" && value != "json") return Bad(option, value, "must be csv or json");
      parsed.json = value == "json";
    } else if (option == "--out") {
      if (value.empty()) return Bad(option, value, "must name a file");
      parsed.out = value;
    }
  }
  return std::nullopt;
}

// Cross-option checks and defaults, still before any file is touched.
std::optional<UsageError> Resolve(Parsed& parsed) {
  if (parsed.file.empty()) return UsageError{"no FILE given (spinward analyze --help)"};
  auto& welch = parsed.analysis.welch;
  welch.segment_length = parsed.segment;
  if (parsed.overlap_samples) {
    if (*parsed.overlap_samples >= parsed.segment) {
      return Bad("--overlap", std::to_string(*parsed.overlap_samples),
                 "must be less than the segment (" + std::to_string(parsed.segment) + ")");
    }
    welch.overlap = *parsed.overlap_samples;
  } else {
    auto overlap = est::OverlapFromPercent(parsed.segment, parsed.overlap_percent);
    if (!overlap.ok()) return UsageError{"--overlap: " + overlap.message()};
    welch.overlap = *overlap;
    if (welch.overlap >= parsed.segment) {
      return UsageError{"--overlap: " + std::to_string(parsed.overlap_percent) + "% of a " +
                        std::to_string(parsed.segment) +
                        "-sample segment leaves no hop; choose less"};
    }
  }
  if (parsed.fft_length != 0 && parsed.fft_length < parsed.segment) {
    return Bad("--fft-length", std::to_string(parsed.fft_length),
               "must be at least the segment (" + std::to_string(parsed.segment) + ")");
  }
  welch.fft_length = parsed.fft_length;

  if (parsed.analysis.sensitivity && parsed.input_units) {
    return UsageError{
        "--input-units and --sensitivity both set the input unit; the sensitivity's "
        "unit (" +
        std::string(est::ToString(parsed.analysis.sensitivity->unit)) +
        ") is the input unit, drop --input-units"};
  }
  const est::Unit input = parsed.analysis.sensitivity
                              ? parsed.analysis.sensitivity->unit
                              : parsed.input_units.value_or(est::Unit::kMetresPerSecondSquared);
  parsed.analysis.input_unit = input;

  est::Quantity quantity = parsed.quantity.value_or(parsed.units ? est::QuantityOf(*parsed.units)
                                                                 : est::Quantity::kAcceleration);
  if (parsed.units && est::QuantityOf(*parsed.units) != quantity) {
    return Bad("--units", est::ToString(*parsed.units),
               "is a unit of " + std::string(est::ToString(est::QuantityOf(*parsed.units))) +
                   " but --quantity is " + std::string(est::ToString(quantity)));
  }
  auto order = [](est::Quantity q) {
    return q == est::Quantity::kAcceleration ? 0 : q == est::Quantity::kVelocity ? 1 : 2;
  };
  if (order(quantity) < order(est::QuantityOf(input))) {
    return UsageError{"--quantity " + std::string(est::ToString(quantity)) + ": the input is " +
                      std::string(est::ToString(est::QuantityOf(input))) + " (" +
                      std::string(est::ToString(input)) +
                      "); analyze integrates, it does not differentiate"};
  }
  est::Unit unit = parsed.units ? *parsed.units : est::DefaultUnit(quantity);
  if (!parsed.units && quantity == est::QuantityOf(input)) unit = input;
  parsed.analysis.spectrum_unit = unit;
  for (auto& band : parsed.analysis.bands) band.unit = unit;

  return std::nullopt;
}

int WriteOutput(const std::string& text, const std::string& path) {
  if (path.empty()) {
    std::fwrite(text.data(), 1, text.size(), stdout);
    return std::fflush(stdout) == 0 ? 0 : 1;
  }
  std::FILE* file = std::fopen(path.c_str(), "wb");
  if (file == nullptr) {
    std::fprintf(stderr, "spinward analyze: --out '%s': cannot open for writing\n", path.c_str());
    return 1;
  }
  const bool written = std::fwrite(text.data(), 1, text.size(), file) == text.size();
  const bool closed = std::fclose(file) == 0;
  if (!written || !closed) {
    std::fprintf(stderr, "spinward analyze: --out '%s': write failed\n", path.c_str());
    return 1;
  }
  return 0;
}

}  // namespace

int CommandAnalyze(const Arguments& args) {
  Parsed parsed;
  if (auto error = ParseArguments(args, parsed)) {
    std::fprintf(stderr, "spinward analyze: %s\n", error->message.c_str());
    return 2;
  }
  if (parsed.help) {
    std::fwrite(kUsage.data(), 1, kUsage.size(), stdout);
    return 0;
  }
  if (auto error = Resolve(parsed)) {
    std::fprintf(stderr, "spinward analyze: %s\n", error->message.c_str());
    return 2;
  }

  auto recording = ReadRecording(parsed.file, parsed.read);
  if (!recording.ok()) {
    std::fprintf(stderr, "spinward analyze: %s\n", recording.message().c_str());
    return 1;
  }
  // A band the recording's rate cannot hold is the user's to fix: a usage error.
  const double nyquist = recording->sample_rate_hz / 2.0;
  for (std::size_t b = 0; b < parsed.analysis.bands.size(); ++b) {
    const auto& band = parsed.analysis.bands[b];
    if (band.hi_hz > nyquist) {
      std::fprintf(stderr,
                   "spinward analyze: --band '%s': %.10g Hz is above the recording's Nyquist "
                   "frequency, %.10g Hz\n",
                   parsed.band_texts[b].c_str(), band.hi_hz, nyquist);
      return 2;
    }
    if (Status valid = band.Validate(recording->sample_rate_hz); !valid.ok()) {
      std::fprintf(stderr, "spinward analyze: --band '%s': %s\n", parsed.band_texts[b].c_str(),
                   valid.message().c_str());
      return 2;
    }
  }
  auto analysis = AnalyzeRecording(*recording, parsed.analysis);
  if (!analysis.ok()) {
    std::fprintf(stderr, "spinward analyze: %s\n", analysis.message().c_str());
    return 1;
  }
  const std::string text = parsed.json ? FormatAnalysisJson(*analysis, *recording, parsed.analysis)
                                       : FormatAnalysisCsv(*analysis);
  return WriteOutput(text, parsed.out);
}

}  // namespace spinward::daemon
