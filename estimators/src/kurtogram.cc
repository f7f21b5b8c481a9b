#include "spinward/estimators/kurtogram.h"

#include <cmath>
#include <complex>
#include <string>

#include "spinward/estimators/envelope_spectrum.h"

namespace spinward::estimators {

Result<Kurtogram> ComputeKurtogram(std::span<const double> block, double sample_rate_hz,
                                   int max_level, double min_width_hz) {
  if (max_level < 1 || max_level > 10) {
    return Error{"max_level " + std::to_string(max_level) + " must be in [1, 10]"};
  }
  if (!(sample_rate_hz > 0.0) || !std::isfinite(sample_rate_hz)) {
    return Error{"sample_rate_hz must be finite and positive"};
  }
  const double nyquist = sample_rate_hz / 2.0;
  const std::size_t finest = std::size_t{1} << max_level;
  if (block.size() < 16 * finest) {
    return Error{"block of " + std::to_string(block.size()) + " samples is too short for " +
                 std::to_string(finest) + " bands (16 samples per band at least)"};
  }
  // 1, 2, 3, 4, 6, 8, 12, ...: 2^l and, between them, 3 x 2^(l-1).
  std::vector<std::size_t> counts{1};
  for (int level = 1; level <= max_level; ++level) {
    if (level >= 2) counts.push_back(3 * (std::size_t{1} << (level - 2)));
    counts.push_back(std::size_t{1} << level);
  }
  Kurtogram result;
  bool have_best = false;
  for (std::size_t count : counts) {
    const double width = nyquist / static_cast<double>(count);
    if (width < min_width_hz) continue;
    for (std::size_t k = 0; k < count; ++k) {
      KurtogramCell cell;
      cell.bands_in_level = count;
      cell.low_hz = width * static_cast<double>(k);
      cell.high_hz = k + 1 == count ? nyquist : width * static_cast<double>(k + 1);
      auto z = AnalyticBandSignal(block, sample_rate_hz, cell.low_hz, cell.high_hz);
      if (!z.ok()) return Error{z.message()};
      double m2 = 0.0;
      double m4 = 0.0;
      for (const auto& value : *z) {
        const double power = std::norm(value);
        m2 += power;
        m4 += power * power;
      }
      const double n = static_cast<double>(z->size());
      m2 /= n;
      m4 /= n;
      cell.kurtosis = m2 > 0.0 ? m4 / (m2 * m2) - 2.0 : 0.0;
      if (!have_best || cell.kurtosis > result.best.kurtosis) {
        result.best = cell;
        have_best = true;
      }
      result.cells.push_back(cell);
    }
  }
  if (!have_best) {
    return Error{"min_width_hz leaves no band: the widest is " + std::to_string(nyquist) + " Hz"};
  }
  return result;
}

}  // namespace spinward::estimators
