// Routes sample blocks from every source to the pipeline of the point whose sensor sent them, and
// runs the pipelines on a pool of worker threads.
//
// Each point owns a strand: its blocks are processed in arrival order, one at a time, while
// different points run in parallel, so one slow or broken point never blocks another. Queues are
// bounded per point (in samples): when a point falls behind, Offer answers kFull and the source
// decides what that means (TCP stops reading the socket until there is room; UDP drops and counts).
// A point with nothing queued takes any block, even one longer than the limit.
// Reload swaps the set of points: unchanged points keep their running state, changed ones are
// flushed and restarted. Thread-safety: all public members may be called from any thread.
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "spinward/daemon/channel_pipeline.h"
#include "spinward/daemon/record_sink.h"
#include "spinward/daemon/sample_block.h"

namespace spinward::daemon {

struct RouterOptions {
  std::size_t worker_threads = 0;                      // 0: one per hardware thread
  std::size_t max_queued_samples_per_point = 1 << 20;  // ~41 s at 25.6 kHz
};

enum class OfferResult { kQueued, kFull, kUnknownSensor };

// What a reload did, by point id.
struct ReloadSummary {
  std::vector<std::string> kept, restarted, added, removed;
};

// Totals over all points, for logs, /metrics and the demo.
struct RouterTotals {
  std::uint64_t blocks = 0, samples = 0, segments = 0, records = 0;
  std::uint64_t rejected_rate = 0, rejected_non_finite = 0, rejected_other = 0;
  std::uint64_t sequence_gaps = 0, time_jumps = 0;
  std::uint64_t unknown_sensor = 0, refused_full = 0;
  std::size_t queued_samples = 0;
  // The processing lag: the most signal any one point has waiting for its pipeline, in seconds.
  double max_queued_seconds = 0.0;
};

class PointRouter {
 public:
  // `report` receives a pipeline's rejections and restarts (already rate-limited per point).
  using Reporter = std::function<void(const std::string& point_id, const std::string& message)>;

  PointRouter(RouterOptions options, std::shared_ptr<RecordSink> sink, Reporter report = {});
  ~PointRouter();
  PointRouter(const PointRouter&) = delete;
  PointRouter& operator=(const PointRouter&) = delete;

  // Replaces the set of points. Fails, changing nothing, when any point's settings are invalid.
  Result<ReloadSummary> Configure(const std::vector<PointSettings>& points);

  OfferResult Offer(SampleBlock&& block);
  // A processed block's sample buffer (old samples left in it) for a source to resize and decode
  // into, else an empty vector.
  std::vector<double> SpareSampleBuffer();
  bool KnowsSensor(const std::string& sensor_id) const;

  // Waits until every queued block has been processed.
  void Drain();
  // Drains, then ends every point's interval in progress (its partial average becomes a record).
  void FlushAll();
  // Drains and stops the workers; Offer afterwards answers kFull.
  void Stop();

  RouterTotals Totals() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace spinward::daemon
