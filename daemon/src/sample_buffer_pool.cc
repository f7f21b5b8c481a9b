#include "spinward/daemon/sample_buffer_pool.h"

#include <utility>

namespace spinward::daemon {

SampleBufferPool::SampleBufferPool(std::size_t max_samples) : max_samples_(max_samples) {}

std::vector<double> SampleBufferPool::Take() {
  std::vector<double> buffer;
  {
    std::lock_guard lock(mutex_);
    if (buffers_.empty()) return buffer;
    buffer = std::move(buffers_.back());
    buffers_.pop_back();
    kept_samples_ -= buffer.capacity();
  }
  return buffer;
}

void SampleBufferPool::Give(std::vector<double>&& buffer) {
  const std::size_t capacity = buffer.capacity();
  if (capacity == 0) return;
  std::lock_guard lock(mutex_);
  if (capacity > max_samples_ - kept_samples_) return;  // kept_samples_ <= max_samples_ always
  kept_samples_ += capacity;
  buffers_.push_back(std::move(buffer));
}

std::size_t SampleBufferPool::kept() const {
  std::lock_guard lock(mutex_);
  return buffers_.size();
}

std::size_t SampleBufferPool::kept_samples() const {
  std::lock_guard lock(mutex_);
  return kept_samples_;
}

}  // namespace spinward::daemon
