#include "analysis_report.h"

#include <cmath>
#include <cstdio>

namespace spinward::daemon {
namespace {

void AppendNumber(std::string& out, double value) {
  if (!std::isfinite(value)) {
    out += "null";
    return;
  }
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.17g", value);
  out += buffer;
}

// CSV cells are quoted when they hold a delimiter or a quote (RFC 4180).
std::string CsvCell(std::string_view text) {
  if (text.find_first_of(",\"\n") == std::string_view::npos) return std::string(text);
  std::string quoted = "\"";
  for (char c : text) {
    if (c == '"') quoted += '"';
    quoted += c;
  }
  return quoted + "\"";
}

std::string JsonString(std::string_view text) {
  std::string out = "\"";
  for (unsigned char c : text) {
    switch (c) {
      case '"':
        out += "\\\"";
        break;
      case '\\':
        out += "\\\\";
        break;
      case '\n':
        out += "\\n";
        break;
      case '\t':
        out += "\\t";
        break;
      default:
        if (c < 0x20) {
          char buffer[8];
          std::snprintf(buffer, sizeof buffer, "\\u%04x", c);
          out += buffer;
        } else {
          out += static_cast<char>(c);
        }
    }
  }
  return out + "\"";
}

class JsonObject {
 public:
  explicit JsonObject(std::string& out, int indent) : out_(out), indent_(indent) { out_ += "{"; }
  void Key(std::string_view key) {
    out_ += first_ ? "\n" : ",\n";
    first_ = false;
    out_.append(static_cast<std::size_t>(indent_ + 2), ' ');
    out_ += JsonString(key) + ": ";
  }
  void Number(std::string_view key, double value) {
    Key(key);
    AppendNumber(out_, value);
  }
  void Count(std::string_view key, std::size_t value) {
    Key(key);
    out_ += std::to_string(value);
  }
  void String(std::string_view key, std::string_view value) {
    Key(key);
    out_ += JsonString(value);
  }
  void Close() {
    out_ += "\n";
    out_.append(static_cast<std::size_t>(indent_), ' ');
    out_ += "}";
  }

 private:
  std::string& out_;
  int indent_;
  bool first_ = true;
};

void NumberArray(std::string& out, const std::vector<double>& values) {
  out += "[";
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (i > 0) out += ",";
    AppendNumber(out, values[i]);
  }
  out += "]";
}

}  // namespace

std::string FormatAnalysisCsv(const Analysis& analysis) {
  std::string out = "frequency_hz,psd\n";
  const auto& spectrum = analysis.spectrum;
  out.reserve(out.size() + spectrum.values.size() * 48);
  for (std::size_t m = 0; m < spectrum.values.size(); ++m) {
    AppendNumber(out, spectrum.FrequencyHz(m));
    out += ",";
    AppendNumber(out, spectrum.values[m]);
    out += "\n";
  }
  if (!analysis.bands.empty()) {
    out += "\nband,lo_hz,hi_hz,unit,rms\n";
    for (const auto& band : analysis.bands) {
      out += CsvCell(band.spec.name) + ",";
      AppendNumber(out, band.spec.lo_hz);
      out += ",";
      AppendNumber(out, band.spec.hi_hz);
      out += "," + CsvCell(estimators::ToString(band.spec.unit)) + ",";
      AppendNumber(out, band.value.rms);
      out += "\n";
    }
  }
  return out;
}

std::string FormatAnalysisJson(const Analysis& analysis, const Recording& recording,
                               const AnalysisOptions& options) {
  const auto& spectrum = analysis.spectrum;
  std::string out;
  out.reserve(spectrum.values.size() * 50 + 4096);
  JsonObject root(out, 0);
  root.String("source", recording.source);
  root.Count("samples", recording.samples.size());
  root.Number("duration_s", recording.DurationSeconds());

  root.Key("welch");
  JsonObject welch(out, 2);
  welch.Number("sample_rate_hz", spectrum.sample_rate_hz);
  welch.Count("segment_length", spectrum.segment_length);
  welch.Count("overlap", analysis.overlap);
  welch.Count("fft_length", spectrum.fft_length);
  welch.String("window", estimators::ToString(spectrum.window));
  welch.String("detrend", estimators::ToString(options.welch.detrend));
  welch.String("scaling", estimators::ToString(spectrum.scaling));
  welch.String("sides", estimators::ToString(spectrum.sides));
  welch.String("averaging", estimators::ToString(spectrum.averaging));
  if (spectrum.averaging == estimators::Averaging::kExponential) {
    welch.Number("time_constant_s", options.welch.exponential_time_constant_s);
  }
  welch.Count("segment_count", spectrum.segment_count);
  welch.Number("bin_width_hz", spectrum.BinWidthHz());
  welch.Close();

  root.String("input_unit", estimators::ToString(analysis.input_unit));
  if (options.sensitivity) {
    root.Key("sensitivity");
    JsonObject sensitivity(out, 2);
    sensitivity.Number("volts_per_unit", options.sensitivity->volts_per_unit);
    sensitivity.String("unit", estimators::ToString(options.sensitivity->unit));
    sensitivity.Close();
  }
  root.String("quantity", estimators::ToString(estimators::QuantityOf(analysis.spectrum_unit)));
  root.String("psd_unit", analysis.spectrum_unit_text);

  root.Key("overall");
  JsonObject overall(out, 2);
  const auto& o = analysis.overall;
  overall.String("unit", estimators::ToString(analysis.input_unit));
  overall.Count("count", o.count);
  overall.Number("mean", o.mean);
  overall.Number("rms", o.rms);
  overall.Number("peak", o.peak);
  overall.Number("peak_to_peak", o.peak_to_peak);
  overall.Number("crest_factor", o.crest_factor);
  overall.Number("kurtosis", o.kurtosis);
  overall.Number("min", o.min);
  overall.Number("max", o.max);
  overall.Close();

  root.Key("bands");
  out += "[";
  for (std::size_t i = 0; i < analysis.bands.size(); ++i) {
    const auto& band = analysis.bands[i];
    out += i > 0 ? ",\n    " : "\n    ";
    JsonObject item(out, 4);
    item.String("name", band.spec.name);
    item.Number("lo_hz", band.spec.lo_hz);
    item.Number("hi_hz", band.spec.hi_hz);
    item.String("unit", estimators::ToString(band.spec.unit));
    item.Number("rms", band.value.rms);
    item.Number("mean_square", band.value.mean_square);
    item.Close();
  }
  out += analysis.bands.empty() ? "]" : "\n  ]";

  root.Key("frequency_hz");
  NumberArray(out, spectrum.FrequenciesHz());
  root.Key("psd");
  NumberArray(out, spectrum.values);
  root.Close();
  out += "\n";
  return out;
}

}  // namespace spinward::daemon
