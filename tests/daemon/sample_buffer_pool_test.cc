// SampleBufferPool: a buffer given back is handed out again with its memory; the pool never
// keeps more than its bound (its own contract: these checks have no outside source); and it is
// safe to use from a source thread and a worker thread at once (the TSan build runs this too).
#include "spinward/daemon/sample_buffer_pool.h"

#include <gtest/gtest.h>

#include <thread>

namespace spinward::daemon {
namespace {

TEST(SampleBufferPool, HandsBackTheSameMemory) {
  SampleBufferPool pool(1 << 16);
  EXPECT_EQ(pool.Take().capacity(), 0u) << "an empty pool gives a plain empty vector";
  std::vector<double> buffer(2560, 1.5);
  const double* memory = buffer.data();
  pool.Give(std::move(buffer));
  EXPECT_EQ(pool.kept(), 1u);
  std::vector<double> again = pool.Take();
  EXPECT_EQ(again.size(), 2560u);  // as given back: the taker overwrites it
  EXPECT_EQ(again.data(), memory);
  EXPECT_EQ(pool.kept(), 0u);
  EXPECT_EQ(pool.kept_samples(), 0u);
}

TEST(SampleBufferPool, KeepsNoMoreThanItsBound) {
  SampleBufferPool pool(10000);
  for (int i = 0; i < 10; ++i) pool.Give(std::vector<double>(2560));
  EXPECT_EQ(pool.kept(), 3u);  // 3 x 2560 = 7680 fits in 10,000; a fourth would not
  EXPECT_LE(pool.kept_samples(), 10000u);
  pool.Give(std::vector<double>(20000));  // larger than the whole bound
  pool.Give(std::vector<double>());       // nothing to keep
  EXPECT_EQ(pool.kept(), 3u);
  pool.Give(std::vector<double>(2320));  // exactly fills it
  EXPECT_EQ(pool.kept_samples(), 10000u);
}

TEST(SampleBufferPool, OneThreadGivesWhileAnotherTakes) {
  SampleBufferPool pool(1 << 20);
  std::thread worker([&] {
    for (int i = 0; i < 2000; ++i) pool.Give(std::vector<double>(64 + i % 7));
  });
  std::size_t reused = 0;
  for (int i = 0; i < 2000; ++i) {
    std::vector<double> buffer = pool.Take();
    if (buffer.capacity() > 0) ++reused;
  }
  worker.join();
  EXPECT_LE(pool.kept_samples(), std::size_t{1} << 20);
  EXPECT_EQ(pool.kept() + reused, 2000u);
}

}  // namespace
}  // namespace spinward::daemon
