// Text names of the Welch option enums, as the configuration and the CLI spell them.
#include <string>

#include "spinward/estimators/streaming_welch.h"

namespace spinward::estimators {

Result<Detrend> ParseDetrend(std::string_view text) {
  if (text == "none") return Detrend::kNone;
  if (text == "mean" || text == "constant") return Detrend::kMean;
  if (text == "linear") return Detrend::kLinear;
  return Error{"detrend '" + std::string(text) + "' is unknown (expected none, mean or linear)"};
}

Result<Scaling> ParseScaling(std::string_view text) {
  if (text == "density") return Scaling::kDensity;
  if (text == "spectrum") return Scaling::kSpectrum;
  return Error{"scaling '" + std::string(text) + "' is unknown (expected density or spectrum)"};
}

Result<Sides> ParseSides(std::string_view text) {
  if (text == "one" || text == "onesided") return Sides::kOneSided;
  if (text == "two" || text == "twosided") return Sides::kTwoSided;
  return Error{"sides '" + std::string(text) + "' is unknown (expected one or two)"};
}

Result<Averaging> ParseAveraging(std::string_view text) {
  if (text == "mean") return Averaging::kMean;
  if (text == "median") return Averaging::kMedian;
  if (text == "exponential") return Averaging::kExponential;
  if (text == "peak") return Averaging::kPeakHold;
  return Error{"averaging '" + std::string(text) +
               "' is unknown (expected mean, median, exponential or peak)"};
}

std::string_view ToString(Detrend value) {
  switch (value) {
    case Detrend::kNone:
      return "none";
    case Detrend::kMean:
      return "mean";
    case Detrend::kLinear:
      return "linear";
  }
  return "unknown";
}

std::string_view ToString(Scaling value) {
  switch (value) {
    case Scaling::kDensity:
      return "density";
    case Scaling::kSpectrum:
      return "spectrum";
  }
  return "unknown";
}

std::string_view ToString(Sides value) {
  switch (value) {
    case Sides::kOneSided:
      return "one";
    case Sides::kTwoSided:
      return "two";
  }
  return "unknown";
}

std::string_view ToString(Averaging value) {
  switch (value) {
    case Averaging::kMean:
      return "mean";
    case Averaging::kMedian:
      return "median";
    case Averaging::kExponential:
      return "exponential";
    case Averaging::kPeakHold:
      return "peak";
  }
  return "unknown";
}

}  // namespace spinward::estimators
