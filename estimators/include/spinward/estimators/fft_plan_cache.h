// Real-to-complex FFTs of a given length, planned once and shared by every channel.
// FFTW's planner is not thread-safe, so the cache serialises plan creation behind one mutex; executing
// a plan on caller-owned, SIMD-aligned buffers is thread-safe and allocates nothing.
// No FFTW type appears here: the plan lives behind RealFft's private implementation.
// Thread-safety: FftPlanCache and RealFft are safe to use from many threads at once.
#pragma once

#include <complex>
#include <cstddef>
#include <map>
#include <memory>
#include <mutex>
#include <span>

namespace spinward::estimators {

// A buffer aligned the way FFTW's SIMD code wants it. Move-only owner.
class AlignedBuffer {
 public:
  AlignedBuffer() = default;
  explicit AlignedBuffer(std::size_t bytes);
  AlignedBuffer(AlignedBuffer&& other) noexcept;
  AlignedBuffer& operator=(AlignedBuffer&& other) noexcept;
  AlignedBuffer(const AlignedBuffer&) = delete;
  AlignedBuffer& operator=(const AlignedBuffer&) = delete;
  ~AlignedBuffer();
  void* data() const { return data_; }

 private:
  void* data_ = nullptr;
};

class RealFft {
 public:
  ~RealFft();
  RealFft(const RealFft&) = delete;
  RealFft& operator=(const RealFft&) = delete;

  std::size_t length() const { return length_; }
  std::size_t output_bins() const { return length_ / 2 + 1; }
  // in: length() doubles, out: output_bins() complex values; both from AlignedBuffer (or fftw_malloc).
  void Forward(double* in, std::complex<double>* out) const;

 private:
  friend class FftPlanCache;
  struct Plan;
  RealFft(std::size_t length, std::unique_ptr<Plan> plan);
  std::size_t length_;
  std::unique_ptr<Plan> plan_;
};

class FftPlanCache {
 public:
  // The process-wide cache that every StreamingWelch uses unless given another.
  static FftPlanCache& Shared();

  std::shared_ptr<const RealFft> Get(std::size_t length);
  std::size_t size() const;

 private:
  mutable std::mutex mutex_;
  std::map<std::size_t, std::shared_ptr<const RealFft>> plans_;
};

}  // namespace spinward::estimators
