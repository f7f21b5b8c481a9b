// The trend writer: a dedicated thread that owns the TrendStore and commits what the processing
// path submits, in batched transactions (up to max_batch_items items or max_batch_delay, whichever
// comes first), so the processing path never waits on the disk. Submit only takes a mutex.
// When a commit fails for a reason that may pass (disk full, I/O error, locked database) the batch
// stays in a bounded in-memory backlog and is retried with exponential backoff; what the bound
// cannot hold is dropped oldest first, counted and logged, never silently. A failure that retrying
// cannot fix (a bad statement) drops that batch, also counted and logged.
// The writer owns the store; logging goes through a callback, so storage/ needs no logging library.
// Thread-safety: Submit, Post, Flush and counters() may be called from any thread.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "spinward/estimators/result.h"
#include "spinward/storage/trend_store.h"

namespace spinward::storage {

enum class LogLevel { kInfo, kWarning, kError };
using LogCallback = std::function<void(LogLevel level, const std::string& message)>;

struct CommittedInterval {
  std::string point_id;
  std::int64_t interval_start_ns = 0;
};
// Called on the writer thread after each commit with the records' intervals, in commit order.
using CommitCallback = std::function<void(const std::vector<CommittedInterval>&)>;

struct WriterOptions {
  // An item is one record, one alarm event or one alarm state.
  std::size_t max_batch_items = 500;
  std::chrono::milliseconds max_batch_delay{1000};  // a batch with alarm events is due at once
  std::size_t max_backlog_items = 200000;  // queued + in flight; beyond it the oldest are dropped
  std::chrono::milliseconds retry_initial{200};
  std::chrono::milliseconds retry_max{30000};
  std::chrono::milliseconds prune_every{60000};  // 0: the writer never prunes
  std::function<std::int64_t()> now_ns;          // wall clock for retention; null: system clock
  // Called on the writer thread after each commit that stored new alarm events (and with them
  // their outbox rows), so messaging can send them at once; must be quick. Null: nobody is told.
  std::function<void()> on_events_committed;

  Status Validate() const;
};

struct WriterCounters {
  std::uint64_t committed_batches = 0;    // transactions committed
  double commit_seconds_total = 0.0;      // time spent in those commits (database write latency)
  std::uint64_t committed_records = 0;    // measurement records in committed transactions
  std::uint64_t committed_intervals = 0;  // trend rows inserted
  std::uint64_t committed_events = 0;
  std::uint64_t failed_attempts = 0;  // commits that failed and were kept for retry
  std::uint64_t dropped_records = 0;
  std::uint64_t dropped_events = 0;
  std::uint64_t dropped_states = 0;
  std::uint64_t pruned_rows = 0;
  std::size_t backlog_items = 0;  // waiting, including a batch in flight
  // The last commit attempt failed and is waiting for its retry (disk full, I/O error, locked);
  // false again after the next commit that succeeds. Health readiness reads it.
  bool failing = false;
};

class TrendWriter {
 public:
  // Starts the thread. Fails on bad options.
  static Result<std::unique_ptr<TrendWriter>> Start(TrendStore store, WriterOptions options,
                                                    LogCallback log = {},
                                                    CommitCallback on_commit = {});
  TrendWriter(const TrendWriter&) = delete;
  TrendWriter& operator=(const TrendWriter&) = delete;
  // Stops: one last attempt to commit what is waiting; what still fails is counted as dropped.
  ~TrendWriter();

  // Queues a batch (records plus the alarm events and states they caused: committed together).
  // Returns false when older items had to be dropped to stay within max_backlog_items.
  bool Submit(WriteBatch batch);

  // Runs `task` on the writer thread between transactions, with the store. For maintenance (and
  // for fault tests, e.g. TrendStore::SetMaxPageCount).
  void Post(std::function<void(TrendStore&)> task);

  // Waits until everything submitted before the call is committed or dropped, and posted tasks
  // have run. Returns false if that did not happen within `timeout`.
  bool Flush(std::chrono::milliseconds timeout);

  WriterCounters counters() const;

  // Stops the thread now (as the destructor does); safe to call twice.
  void Stop();

 private:
  struct Shared;
  explicit TrendWriter(std::unique_ptr<Shared> shared);
  std::unique_ptr<Shared> shared_;
};

}  // namespace spinward::storage
