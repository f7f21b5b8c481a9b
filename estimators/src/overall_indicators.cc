// Time-domain indicators by block-wise merging of central moments.
//
// Why not running sums of x, x^2, x^3, x^4: with a 1e6 DC offset under a 1e-3 vibration, x^2
// carries the vibration 18 decimal digits down, below double precision, and the variance comes out
// as rounding noise (even negative). Central moments never form those large powers. Why per block,
// not per sample (Welford): the per-sample update has a division and a long dependency chain. Here
// each block costs two plain passes, (1) sum, min, max and (2) the powers of the deviations from
// the block's provisional mean, written as independent lanes the CPU can overlap; the provisional
// mean's rounding error is then removed exactly by the shift formulas (the "corrected two-pass"
// algorithm). Blocks merge with the pairwise formulas of Chan, Golub and LeVeque (1979) extended to
// the 3rd and 4th moments by Pebay (2008), Sandia report SAND2008-6212.
#include "spinward/estimators/overall_indicators.h"

#include <algorithm>
#include <cmath>

namespace spinward::estimators {
namespace {

// Sums of powers of deviations from `mean` (M2 = sum (x - mean)^2, etc.) of `count` samples.
struct Moments {
  double count = 0.0;
  double mean = 0.0;
  double m2 = 0.0;
  double m3 = 0.0;
  double m4 = 0.0;
};

constexpr std::size_t kLanes = 4;

// Pebay (2008), eqs. 1.1-1.4 with B merged into A; Chan et al. (1979) for the mean and M2.
void MergeInto(Moments& a, const Moments& b) {
  if (b.count == 0.0) return;
  if (a.count == 0.0) {
    a = b;
    return;
  }
  const double na = a.count;
  const double nb = b.count;
  const double n = na + nb;
  const double delta = b.mean - a.mean;
  const double delta_n = delta / n;
  const double delta_n2 = delta_n * delta_n;
  const double term = delta * delta_n * na * nb;  // delta^2 na nb / n

  const double mean = a.mean + nb * delta_n;
  const double m2 = a.m2 + b.m2 + term;
  const double m3 =
      a.m3 + b.m3 + term * delta_n * (na - nb) + 3.0 * delta_n * (na * b.m2 - nb * a.m2);
  const double m4 = a.m4 + b.m4 + term * delta_n2 * (na * na - na * nb + nb * nb) +
                    6.0 * delta_n2 * (na * na * b.m2 + nb * nb * a.m2) +
                    4.0 * delta_n * (na * b.m3 - nb * a.m3);
  a.count = n;
  a.mean = mean;
  a.m2 = m2;
  a.m3 = m3;
  a.m4 = m4;
}

}  // namespace

bool IndicatorAccumulator::Add(std::span<const double> samples) {
  const std::size_t n = samples.size();
  if (n == 0) return true;
  const double* x = samples.data();

  // Pass 1: sum, min, max. Independent lanes break the addition's dependency chain.
  double sum[kLanes] = {0.0, 0.0, 0.0, 0.0};
  double lo = x[0];
  double hi = x[0];
  std::size_t i = 0;
  for (; i + kLanes <= n; i += kLanes) {
    for (std::size_t k = 0; k < kLanes; ++k) {
      sum[k] += x[i + k];
      lo = std::min(lo, x[i + k]);
      hi = std::max(hi, x[i + k]);
    }
  }
  for (; i < n; ++i) {
    sum[0] += x[i];
    lo = std::min(lo, x[i]);
    hi = std::max(hi, x[i]);
  }
  const double total = (sum[0] + sum[1]) + (sum[2] + sum[3]);
  // NaN or Inf anywhere makes the sum non-finite (so do values big enough to overflow it).
  if (!std::isfinite(total)) {
    ++rejected_blocks_;
    rejected_samples_ += n;
    return false;
  }

  const double count = static_cast<double>(n);
  Moments block;
  block.count = count;
  if (lo == hi) {
    block.mean = lo;  // constant block: exactly zero spread, no rounding residue
  } else {
    // Pass 2: powers of deviations from the provisional mean.
    const double provisional = total / count;
    double s1[kLanes] = {0.0, 0.0, 0.0, 0.0};
    double s2[kLanes] = {0.0, 0.0, 0.0, 0.0};
    double s3[kLanes] = {0.0, 0.0, 0.0, 0.0};
    double s4[kLanes] = {0.0, 0.0, 0.0, 0.0};
    i = 0;
    for (; i + kLanes <= n; i += kLanes) {
      for (std::size_t k = 0; k < kLanes; ++k) {
        const double d = x[i + k] - provisional;
        const double d2 = d * d;
        s1[k] += d;
        s2[k] += d2;
        s3[k] += d2 * d;
        s4[k] += d2 * d2;
      }
    }
    for (; i < n; ++i) {
      const double d = x[i] - provisional;
      const double d2 = d * d;
      s1[0] += d;
      s2[0] += d2;
      s3[0] += d2 * d;
      s4[0] += d2 * d2;
    }
    const double S1 = (s1[0] + s1[1]) + (s1[2] + s1[3]);
    const double S2 = (s2[0] + s2[1]) + (s2[2] + s2[3]);
    const double S3 = (s3[0] + s3[1]) + (s3[2] + s3[3]);
    const double S4 = (s4[0] + s4[1]) + (s4[2] + s4[3]);
    // Shift the moments from the provisional mean to the true one (c = its error): binomial
    // expansion of sum (d - c)^k with sum d = n c.
    const double c = S1 / count;
    const double c2 = c * c;
    block.mean = provisional + c;
    block.m2 = std::max(0.0, S2 - count * c2);
    block.m3 = S3 - 3.0 * c * S2 + 2.0 * count * c2 * c;
    block.m4 = std::max(0.0, S4 - 4.0 * c * S3 + 6.0 * c2 * S2 - 3.0 * count * c2 * c2);
  }

  Moments running{static_cast<double>(count_), mean_, m2_, m3_, m4_};
  MergeInto(running, block);
  min_ = count_ == 0 ? lo : std::min(min_, lo);
  max_ = count_ == 0 ? hi : std::max(max_, hi);
  count_ += n;
  mean_ = running.mean;
  m2_ = running.m2;
  m3_ = running.m3;
  m4_ = running.m4;
  return true;
}

void IndicatorAccumulator::Merge(const IndicatorAccumulator& other) {
  rejected_blocks_ += other.rejected_blocks_;
  rejected_samples_ += other.rejected_samples_;
  if (other.count_ == 0) return;
  Moments running{static_cast<double>(count_), mean_, m2_, m3_, m4_};
  MergeInto(running, Moments{static_cast<double>(other.count_), other.mean_, other.m2_, other.m3_,
                             other.m4_});
  min_ = count_ == 0 ? other.min_ : std::min(min_, other.min_);
  max_ = count_ == 0 ? other.max_ : std::max(max_, other.max_);
  count_ += other.count_;
  mean_ = running.mean;
  m2_ = running.m2;
  m3_ = running.m3;
  m4_ = running.m4;
}

OverallIndicators IndicatorAccumulator::Current() const {
  OverallIndicators out;
  out.count = count_;
  if (count_ == 0) return out;
  const double n = static_cast<double>(count_);
  out.mean = mean_;
  out.min = min_;
  out.max = max_;
  out.peak_to_peak = max_ - min_;
  // The mean lies within [min, max] up to rounding; clamp so peak is never negative.
  out.peak = std::max(0.0, std::max(max_ - mean_, mean_ - min_));
  out.rms = std::sqrt(m2_ / n);
  // Zero variance (one sample, a constant signal): crest factor and kurtosis are 0/0; report 0.
  // Also when m2^2 underflows (deviations below ~1e-154): 0, not NaN or Inf.
  if (out.rms > 0.0) out.crest_factor = out.peak / out.rms;
  const double m2_squared = m2_ * m2_;
  if (m2_squared > 0.0 && std::isfinite(m2_squared)) out.kurtosis = n * m4_ / m2_squared;
  return out;
}

void IndicatorAccumulator::Reset() { *this = IndicatorAccumulator(); }

}  // namespace spinward::estimators
