// Whether a block of samples holds no NaN or infinity, fast enough to run on every sample that
// arrives. Thread-safety: a pure function.
#pragma once

#include <bit>
#include <cstdint>
#include <span>

namespace spinward::estimators {

// True when no sample is NaN or Inf, i.e. none has an all-ones exponent. Adding 2^52 to the masked
// exponent carries into the sign bit exactly when the exponent is all ones; the OR of those sums is
// an integer reduction the compiler vectorizes, where a std::isfinite loop with an early exit stays
// scalar.
inline bool AllFinite(std::span<const double> samples) {
  constexpr std::uint64_t kExponent = 0x7ff0000000000000;
  constexpr std::uint64_t kExponentOne = 0x0010000000000000;
  std::uint64_t carries = 0;
  for (double x : samples) carries |= (std::bit_cast<std::uint64_t>(x) & kExponent) + kExponentOne;
  return (carries >> 63) == 0;
}

}  // namespace spinward::estimators
