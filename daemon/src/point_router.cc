#include "spinward/daemon/point_router.h"

#include <algorithm>
#include <atomic>
#include <boost/asio/post.hpp>
#include <boost/asio/strand.hpp>
#include <boost/asio/thread_pool.hpp>
#include <chrono>
#include <latch>
#include <map>
#include <shared_mutex>
#include <thread>

#include "rate_limited_reporter.h"
#include "spinward/daemon/sample_buffer_pool.h"
#include "thread_name.h"

namespace spinward::daemon {
namespace {

using Strand = boost::asio::strand<boost::asio::thread_pool::executor_type>;

struct PointWorker {
  PointWorker(Strand s, std::unique_ptr<ChannelPipeline> p)
      : strand(std::move(s)), pipeline(std::move(p)) {}
  Strand strand;
  std::unique_ptr<ChannelPipeline> pipeline;
  std::atomic<std::size_t> queued_samples{0};
  std::atomic<std::size_t> queued_tasks{0};
};

}  // namespace

struct PointRouter::Impl {
  RouterOptions options;
  std::shared_ptr<RecordSink> sink;
  Reporter report;
  boost::asio::thread_pool pool;
  mutable std::shared_mutex mutex;  // guards by_sensor (the map, not the workers)
  std::map<std::string, std::shared_ptr<PointWorker>> by_sensor;
  std::vector<std::shared_ptr<PointWorker>> retired;  // flushed, kept until their tasks end
  RateLimitedReporter limiter;
  SampleBufferPool spare_buffers;  // processed blocks' sample memory, for the sources to reuse
  std::atomic<bool> stopped{false};
  std::atomic<std::uint64_t> unknown_sensor{0};
  std::atomic<std::uint64_t> refused_full{0};
  // Counters of points that have been removed or restarted, so totals never go backwards.
  RouterTotals retired_totals;

  Impl(RouterOptions o, std::shared_ptr<RecordSink> s, Reporter r)
      : options(o), sink(std::move(s)), report(std::move(r)), pool(PoolSize(o)) {
    // Name every worker thread: one task each, none finishing before all have started, so no
    // thread can take two of them. The latch is shared: a task may still be leaving its wait
    // when this constructor has already returned.
    const std::size_t threads = PoolSize(o);
    auto all_started = std::make_shared<std::latch>(static_cast<std::ptrdiff_t>(threads));
    for (std::size_t i = 0; i < threads; ++i) {
      boost::asio::post(pool, [all_started] {
        NameThisThread("spw-points");
        all_started->arrive_and_wait();
      });
    }
    all_started->wait();
  }

  static std::size_t PoolSize(const RouterOptions& o) {
    return o.worker_threads ? o.worker_threads
                            : std::max<std::size_t>(1, std::thread::hardware_concurrency());
  }

  void Run(const std::shared_ptr<PointWorker>& worker, SampleBlock block) {
    const std::size_t n = block.samples.size();
    auto outcome = worker->pipeline->Process(block);
    if ((outcome.verdict != BlockVerdict::kAccepted || outcome.restarted) && report) {
      const auto& id = worker->pipeline->settings().point_id;
      std::uint64_t suppressed = 0;
      if (limiter.Allow(id + "/" + std::string(ToString(outcome.verdict)),
                        std::chrono::steady_clock::now(), &suppressed)) {
        std::string message = outcome.message;
        if (suppressed > 0) message += " (" + std::to_string(suppressed) + " similar not logged)";
        report(id, message);
      }
    }
    spare_buffers.Give(std::move(block.samples));
    worker->queued_samples -= n;
    worker->queued_tasks -= 1;
  }

  static void AddCounters(RouterTotals& t, const PipelineCounters& c) {
    t.blocks += c.blocks;
    t.samples += c.samples;
    t.segments += c.segments;
    t.records += c.records;
    t.rejected_rate += c.rejected_rate;
    t.rejected_non_finite += c.rejected_non_finite;
    t.rejected_other += c.rejected_other;
    t.sequence_gaps += c.sequence_gaps;
    t.time_jumps += c.time_jumps;
  }

  // Runs fn on the worker's strand and waits for it.
  void RunOnStrandAndWait(const std::shared_ptr<PointWorker>& worker, std::function<void()> fn) {
    std::atomic<bool> done{false};
    worker->queued_tasks += 1;
    boost::asio::post(worker->strand, [&] {
      fn();
      worker->queued_tasks -= 1;
      done = true;
    });
    while (!done) std::this_thread::sleep_for(std::chrono::microseconds(200));
  }
};

PointRouter::PointRouter(RouterOptions options, std::shared_ptr<RecordSink> sink, Reporter report)
    : impl_(std::make_unique<Impl>(options, std::move(sink), std::move(report))) {}

PointRouter::~PointRouter() { Stop(); }

Result<ReloadSummary> PointRouter::Configure(const std::vector<PointSettings>& points) {
  // Build every new pipeline first, so a bad point changes nothing.
  std::map<std::string, const PointSettings*> wanted;
  for (const auto& settings : points) {
    if (Status s = settings.Validate(); !s.ok()) return Error{s.message()};
    if (!wanted.emplace(settings.sensor_id, &settings).second) {
      return Error{"sensor " + settings.sensor_id + " is assigned to more than one point"};
    }
  }
  ReloadSummary summary;
  std::map<std::string, std::shared_ptr<PointWorker>> next;
  std::vector<std::shared_ptr<PointWorker>> leaving;
  {
    std::shared_lock lock(impl_->mutex);
    for (const auto& [sensor, settings] : wanted) {
      auto existing = impl_->by_sensor.find(sensor);
      if (existing != impl_->by_sensor.end() &&
          existing->second->pipeline->settings() == *settings) {
        next[sensor] = existing->second;
        summary.kept.push_back(settings->point_id);
        continue;
      }
      auto pipeline = ChannelPipeline::Create(*settings, impl_->sink);
      if (!pipeline.ok()) return Error{pipeline.message()};
      next[sensor] = std::make_shared<PointWorker>(boost::asio::make_strand(impl_->pool),
                                                   std::move(pipeline).value());
      if (existing != impl_->by_sensor.end()) {
        summary.restarted.push_back(settings->point_id);
      } else {
        summary.added.push_back(settings->point_id);
      }
    }
    for (const auto& [sensor, worker] : impl_->by_sensor) {
      auto it = next.find(sensor);
      if (it == next.end() || it->second != worker) {
        leaving.push_back(worker);
        if (it == next.end()) summary.removed.push_back(worker->pipeline->settings().point_id);
      }
    }
  }
  {
    std::unique_lock lock(impl_->mutex);
    impl_->by_sensor = std::move(next);
  }
  // Points that leave end their interval in progress: their samples so far are not lost.
  for (auto& worker : leaving) {
    impl_->RunOnStrandAndWait(worker, [&] { worker->pipeline->Flush(); });
    std::unique_lock lock(impl_->mutex);
    Impl::AddCounters(impl_->retired_totals, worker->pipeline->counters());
  }
  return summary;
}

bool PointRouter::KnowsSensor(const std::string& sensor_id) const {
  std::shared_lock lock(impl_->mutex);
  return impl_->by_sensor.count(sensor_id) != 0;
}

OfferResult PointRouter::Offer(SampleBlock&& block) {
  std::shared_ptr<PointWorker> worker;
  {
    std::shared_lock lock(impl_->mutex);
    auto it = impl_->by_sensor.find(block.sensor_id);
    if (it == impl_->by_sensor.end()) {
      impl_->unknown_sensor++;
      return OfferResult::kUnknownSensor;
    }
    worker = it->second;
  }
  const std::size_t n = block.samples.size();
  // An idle point always takes a block, however large: otherwise a frame longer than the queue
  // limit could never be queued, and a TCP sender would be paused for good.
  const std::size_t queued = worker->queued_samples.load();
  if (impl_->stopped || (queued != 0 && queued + n > impl_->options.max_queued_samples_per_point)) {
    impl_->refused_full++;
    return OfferResult::kFull;
  }
  worker->queued_samples += n;
  worker->queued_tasks += 1;
  boost::asio::post(worker->strand, [impl = impl_.get(), worker, b = std::move(block)]() mutable {
    impl->Run(worker, std::move(b));
  });
  return OfferResult::kQueued;
}

std::vector<double> PointRouter::SpareSampleBuffer() { return impl_->spare_buffers.Take(); }

void PointRouter::Drain() {
  for (;;) {
    bool idle = true;
    {
      std::shared_lock lock(impl_->mutex);
      for (const auto& [sensor, worker] : impl_->by_sensor) {
        if (worker->queued_tasks.load() != 0) idle = false;
      }
    }
    if (idle) return;
    std::this_thread::sleep_for(std::chrono::microseconds(500));
  }
}

void PointRouter::FlushAll() {
  Drain();
  std::vector<std::shared_ptr<PointWorker>> workers;
  {
    std::shared_lock lock(impl_->mutex);
    for (const auto& [sensor, worker] : impl_->by_sensor) workers.push_back(worker);
  }
  for (auto& worker : workers) {
    impl_->RunOnStrandAndWait(worker, [&] { worker->pipeline->Flush(); });
  }
}

void PointRouter::Stop() {
  if (impl_->stopped.exchange(true)) return;
  Drain();
  impl_->pool.join();
}

RouterTotals PointRouter::Totals() const {
  std::shared_lock lock(impl_->mutex);
  RouterTotals totals = impl_->retired_totals;
  for (const auto& [sensor, worker] : impl_->by_sensor) {
    Impl::AddCounters(totals, worker->pipeline->counters());
    const std::size_t queued = worker->queued_samples.load();
    totals.queued_samples += queued;
    const double rate = worker->pipeline->settings().sample_rate_hz;  // fixed for its lifetime
    if (rate > 0) {
      totals.max_queued_seconds =
          std::max(totals.max_queued_seconds, static_cast<double>(queued) / rate);
    }
  }
  totals.unknown_sensor = impl_->unknown_sensor.load();
  totals.refused_full = impl_->refused_full.load();
  return totals;
}

}  // namespace spinward::daemon
