// Where measurement records go once a point's pipeline has made them: the log, a JSON-lines file,
// trend storage, messaging. Every sink implements this one interface, so a pipeline never knows
// which are attached.
// Thread-safety: Consume may be called from several worker threads at once; implementations lock.
#pragma once

#include <memory>
#include <mutex>
#include <vector>

#include "spinward/storage/measurement_record.h"

namespace spinward::daemon {

class RecordSink {
 public:
  virtual ~RecordSink() = default;
  virtual void Consume(const storage::MeasurementRecord& record) = 0;
  virtual void Flush() {}
};

// Hands each record to several sinks, in order.
class FanOutSink final : public RecordSink {
 public:
  void Add(std::shared_ptr<RecordSink> sink) { sinks_.push_back(std::move(sink)); }
  void Consume(const storage::MeasurementRecord& record) override {
    for (auto& sink : sinks_) sink->Consume(record);
  }
  void Flush() override {
    for (auto& sink : sinks_) sink->Flush();
  }

 private:
  std::vector<std::shared_ptr<RecordSink>> sinks_;
};

// Keeps every record in memory: for tests and for the demo's summary.
class CollectingSink final : public RecordSink {
 public:
  void Consume(const storage::MeasurementRecord& record) override {
    std::lock_guard lock(mutex_);
    records_.push_back(record);
  }
  std::vector<storage::MeasurementRecord> Records() const {
    std::lock_guard lock(mutex_);
    return records_;
  }

 private:
  mutable std::mutex mutex_;
  std::vector<storage::MeasurementRecord> records_;
};

}  // namespace spinward::daemon
