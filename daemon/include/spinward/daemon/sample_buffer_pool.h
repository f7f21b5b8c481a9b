// Sample buffers handed back by the workers once a block is processed, for the sources to decode
// the next blocks into. A fresh vector per frame costs an allocation and, since the memory was
// freed on another thread, page faults as the allocator returns it to the system and takes it
// back; recycling keeps the same few buffers warm.
// Bounded: the buffers it keeps hold at most `max_samples` samples between them (by capacity), so
// a burst of large blocks does not pin their memory.
// Thread-safety: Take and Give may be called from any thread.
#pragma once

#include <cstddef>
#include <mutex>
#include <vector>

namespace spinward::daemon {

class SampleBufferPool {
 public:
  // The default, 2^22 samples (32 MiB), keeps about 1,600 frames of 0.1 s at 25.6 kHz.
  explicit SampleBufferPool(std::size_t max_samples = std::size_t{1} << 22);

  // A recycled buffer as it was given back (its size and samples left over from the block it
  // held: the taker overwrites them; keeping the size spares zero-filling it again), or an empty
  // vector when none is kept.
  std::vector<double> Take();
  // Keeps `buffer`'s memory for a later Take, unless that would exceed the bound.
  void Give(std::vector<double>&& buffer);

  std::size_t kept() const;          // buffers
  std::size_t kept_samples() const;  // their capacity in samples

 private:
  const std::size_t max_samples_;
  std::size_t kept_samples_ = 0;
  mutable std::mutex mutex_;
  std::vector<std::vector<double>> buffers_;
};

}  // namespace spinward::daemon
