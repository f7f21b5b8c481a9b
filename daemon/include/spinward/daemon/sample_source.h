// The one interface every sample source implements (TCP listener, UDP listener, drop directory,
// a recording replayed, a test vector), and the one interface they deliver to. Sources turn what
// they receive into SampleBlocks and offer them to a BlockConsumer; the consumer's answer tells a
// source to slow down (TCP stops reading, a file waits) or to drop and count (UDP).
// Thread-safety: Start/Stop from one controlling thread; Offer may be called from any thread.
#pragma once

#include <string>

#include "spinward/daemon/point_router.h"
#include "spinward/daemon/sample_block.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

class BlockConsumer {
 public:
  virtual ~BlockConsumer() = default;
  virtual OfferResult Offer(SampleBlock&& block) = 0;
  // A vector to decode the next block's samples into, resized and overwritten by the caller: a
  // buffer of a block already processed (old samples still in it) when the consumer recycles
  // them, so its memory is reused; else an empty vector.
  virtual std::vector<double> SpareSampleBuffer() { return {}; }
};

// Adapts the router to BlockConsumer.
class RouterConsumer final : public BlockConsumer {
 public:
  explicit RouterConsumer(PointRouter& router) : router_(router) {}
  OfferResult Offer(SampleBlock&& block) override { return router_.Offer(std::move(block)); }
  std::vector<double> SpareSampleBuffer() override { return router_.SpareSampleBuffer(); }

 private:
  PointRouter& router_;
};

class SampleSource {
 public:
  virtual ~SampleSource() = default;
  virtual std::string Describe() const = 0;  // e.g. "tcp 127.0.0.1:7400"
  virtual Status Start() = 0;
  virtual void Stop() = 0;
};

}  // namespace spinward::daemon
