// The text forms of an Analysis that `spinward analyze` prints and the demo saves.
//
// CSV: a header "frequency_hz,psd" and one row per bin; with bands, a blank line, then a second
// table "band,lo_hz,hi_hz,unit,rms". JSON: one object with the source, the Welch settings and
// segment count, units, overall indicators, a "bands" array (name, lo_hz, hi_hz, unit, rms,
// mean_square) and the spectrum as "frequency_hz" and "psd" arrays. Numbers carry 17 significant
// digits, so a reader gets back the very doubles that were computed.
// Thread-safety: pure functions.
#pragma once

#include <string>

#include "recording_analysis.h"

namespace spinward::daemon {

std::string FormatAnalysisCsv(const Analysis& analysis);
std::string FormatAnalysisJson(const Analysis& analysis, const Recording& recording,
                               const AnalysisOptions& options);

}  // namespace spinward::daemon
