// One offline analysis of a recording: the Welch PSD it asks for (converted to the quantity and
// unit it asks for), band values and overall indicators. `spinward analyze` prints it; the demo
// summarises it. The estimators do the arithmetic; this only wires them together.
//
// Units: the recording's samples are in `input_unit` (or volts, when a sensitivity is given, which
// turns them into the sensitivity's unit first). Band values always come from a one-sided density
// spectrum of the input, whatever scaling and sides the printed spectrum has, because band power
// is density x bin width (see band_integrator.h). A printed spectrum in velocity or displacement
// divides each bin by (2 pi f)^2 or (2 pi f)^4; its DC bin is 0 (the integral of a constant is not
// a vibration).
// Thread-safety: pure function over its arguments.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "spinward/daemon/recording_reader.h"
#include "spinward/estimators/band_integrator.h"
#include "spinward/estimators/overall_indicators.h"
#include "spinward/estimators/result.h"
#include "spinward/estimators/streaming_welch.h"
#include "spinward/estimators/units.h"

namespace spinward::daemon {

struct AnalysisOptions {
  estimators::WelchOptions welch;  // sample_rate_hz is taken from the recording
  std::vector<estimators::BandSpec> bands;
  estimators::Unit input_unit = estimators::Unit::kMetresPerSecondSquared;
  std::optional<estimators::Sensitivity> sensitivity;  // samples are volts when set
  estimators::Unit spectrum_unit = estimators::Unit::kMetresPerSecondSquared;  // printed PSD
};

struct BandResult {
  estimators::BandSpec spec;
  estimators::BandValue value;
};

struct Analysis {
  estimators::AveragedSpectrum spectrum;  // as asked, values in spectrum_unit^2[/Hz]
  estimators::Unit spectrum_unit = estimators::Unit::kMetresPerSecondSquared;
  std::string spectrum_unit_text;        // e.g. "(mm/s)^2/Hz", "g^2"
  estimators::AveragedSpectrum density;  // one-sided density of the input, for bands and lines
  estimators::Unit input_unit = estimators::Unit::kMetresPerSecondSquared;
  std::vector<BandResult> bands;
  estimators::OverallIndicators overall;  // of the input, in input_unit
  std::size_t overlap = 0;
};

// Fails with one line: a segment longer than the recording, a band outside the spectrum, a unit
// that would need differentiating (velocity input, acceleration output).
Result<Analysis> AnalyzeRecording(const Recording& recording, const AnalysisOptions& options);

// "(mm/s)^2/Hz" for density, "(mm/s)^2" for spectrum; single-token units go without parentheses.
std::string PsdUnitText(estimators::Unit unit, estimators::Scaling scaling);

}  // namespace spinward::daemon
