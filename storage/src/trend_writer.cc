// One thread, one connection: SQLite allows a single writer at a time anyway, and keeping the
// connection on one thread avoids SQLite's own mutexes. Items leave the queue when a batch is
// taken and go back to its front if the commit fails in a way that may pass, so order is kept and
// the backlog is simply the queue.
#include "spinward/storage/trend_writer.h"

#include <pthread.h>

#include <algorithm>
#include <condition_variable>
#include <deque>
#include <mutex>
#include <thread>

namespace spinward::storage {
namespace {

using Clock = std::chrono::steady_clock;

struct Item {
  std::uint64_t seq = 0;
  WriteBatch batch;
  std::size_t Weight() const {
    return std::max<std::size_t>(1,
                                 batch.records.size() + batch.events.size() + batch.states.size());
  }
};

}  // namespace

Status WriterOptions::Validate() const {
  if (max_batch_items < 1) return Status::Fail("writer: max_batch_items 0 must be at least 1");
  if (max_backlog_items < max_batch_items) {
    return Status::Fail("writer: max_backlog_items " + std::to_string(max_backlog_items) +
                        " must be at least max_batch_items " + std::to_string(max_batch_items));
  }
  if (max_batch_delay.count() < 0 || retry_initial.count() < 1 || retry_max < retry_initial ||
      prune_every.count() < 0) {
    return Status::Fail("writer: delays must be non-negative, retry_initial " +
                        std::to_string(retry_initial.count()) + " ms at least 1 and retry_max " +
                        std::to_string(retry_max.count()) + " ms at least retry_initial");
  }
  return Status::Ok();
}

struct TrendWriter::Shared {
  Shared(TrendStore s, WriterOptions o, LogCallback l, CommitCallback c)
      : store(std::move(s)), options(std::move(o)), log(std::move(l)), on_commit(std::move(c)) {}

  TrendStore store;
  WriterOptions options;
  LogCallback log;
  CommitCallback on_commit;

  mutable std::mutex mutex;
  std::condition_variable wake;      // to the writer thread
  std::condition_variable progress;  // to Flush callers
  std::deque<Item> queue;
  std::vector<std::function<void(TrendStore&)>> tasks;
  std::size_t queued_weight = 0;
  std::size_t in_flight_weight = 0;
  std::uint64_t next_seq = 1;
  std::uint64_t resolved_seq = 0;  // every item with seq <= this is committed or dropped
  std::uint64_t tasks_posted = 0;
  std::uint64_t tasks_run = 0;
  Clock::time_point first_queued{};
  Clock::time_point retry_at{};
  std::chrono::milliseconds backoff{0};
  Clock::time_point next_prune{};
  bool stopping = false;
  WriterCounters counters;
  std::thread thread;

  void Log(LogLevel level, const std::string& message) {
    if (log) log(level, message);
  }

  // Called with the mutex held; returns the messages to log once it is released.
  void DropFront(std::vector<std::string>& messages, const char* why) {
    Item& item = queue.front();
    counters.dropped_records += item.batch.records.size();
    counters.dropped_events += item.batch.events.size();
    counters.dropped_states += item.batch.states.size();
    queued_weight -= item.Weight();
    resolved_seq = std::max(resolved_seq, item.seq);
    messages.push_back(std::string("trend writer dropped ") +
                       std::to_string(item.batch.records.size()) + " records, " +
                       std::to_string(item.batch.events.size()) + " alarm events and " +
                       std::to_string(item.batch.states.size()) + " alarm states (" + why +
                       "); dropped so far: " + std::to_string(counters.dropped_records) +
                       " records, " + std::to_string(counters.dropped_events) + " events");
    queue.pop_front();
  }

  std::int64_t NowNs() const {
    if (options.now_ns) return options.now_ns();
    return std::chrono::duration_cast<std::chrono::nanoseconds>(
               std::chrono::system_clock::now().time_since_epoch())
        .count();
  }

  void Prune() {
    std::uint64_t total = 0;
    for (int step = 0; step < 20; ++step) {  // bounded work per turn; the rest waits its turn
      auto report = store.PruneStep(NowNs());
      if (!report) {
        Log(LogLevel::kWarning, "retention pruning: " + report.message());
        break;
      }
      total += static_cast<std::uint64_t>(report->total());
      if (report->total() == 0) break;
    }
    std::lock_guard lock(mutex);
    counters.pruned_rows += total;
  }

  void Run();
};

void TrendWriter::Shared::Run() {
  std::unique_lock lock(mutex);
  next_prune = Clock::now() + options.prune_every;
  for (;;) {
    auto batch_due = [&] {
      if (queue.empty()) return false;
      if (stopping) return true;
      if (Clock::now() < retry_at) return false;
      return queued_weight >= options.max_batch_items ||
             Clock::now() >= first_queued + options.max_batch_delay;
    };
    auto deadline = Clock::now() + std::chrono::hours(1);
    if (!queue.empty()) deadline = std::max(retry_at, first_queued + options.max_batch_delay);
    if (options.prune_every.count() > 0) deadline = std::min(deadline, next_prune);
    // A batch queued while we sleep can be due before `deadline` (computed when the queue was
    // empty): wake up to recompute it, or commits would wait for the next prune or for stop.
    auto due_earlier = [&] {
      return !queue.empty() &&
             std::max(retry_at, first_queued + options.max_batch_delay) < deadline;
    };
    wake.wait_until(lock, deadline, [&] {
      return stopping || !tasks.empty() || batch_due() || due_earlier() ||
             (options.prune_every.count() > 0 && Clock::now() >= next_prune);
    });

    if (!tasks.empty()) {
      auto run = std::move(tasks);
      tasks.clear();
      lock.unlock();
      for (auto& task : run) task(store);
      lock.lock();
      tasks_run += run.size();
      progress.notify_all();
    }
    if (options.prune_every.count() > 0 && Clock::now() >= next_prune && !stopping) {
      next_prune = Clock::now() + options.prune_every;
      if (backoff.count() == 0) {
        lock.unlock();
        Prune();
        lock.lock();
      }
    }
    if (batch_due()) {
      // Take whole items from the front up to max_batch_items (at least one item).
      std::vector<Item> taken;
      std::size_t weight = 0;
      while (!queue.empty() &&
             (taken.empty() || weight + queue.front().Weight() <= options.max_batch_items)) {
        weight += queue.front().Weight();
        taken.push_back(std::move(queue.front()));
        queue.pop_front();
      }
      queued_weight -= weight;
      in_flight_weight = weight;
      first_queued = Clock::now();
      lock.unlock();

      WriteBatch merged;
      for (const Item& item : taken) {
        const WriteBatch& b = item.batch;
        merged.records.insert(merged.records.end(), b.records.begin(), b.records.end());
        merged.events.insert(merged.events.end(), b.events.begin(), b.events.end());
        merged.states.insert(merged.states.end(), b.states.begin(), b.states.end());
      }
      const auto write_began = Clock::now();
      WriteOutcome outcome = store.Write(merged);
      const double write_seconds =
          std::chrono::duration<double>(Clock::now() - write_began).count();
      for (const auto& warning : outcome.warnings) Log(LogLevel::kWarning, warning);
      if (outcome.status.ok() && on_commit) {
        std::vector<CommittedInterval> committed;
        committed.reserve(merged.records.size());
        for (const auto& r : merged.records) committed.push_back({r.point_id, r.interval_start_ns});
        on_commit(committed);
      }
      if (outcome.status.ok() && outcome.events_written > 0 && options.on_events_committed) {
        options.on_events_committed();
      }

      std::vector<std::string> messages;
      lock.lock();
      in_flight_weight = 0;
      if (outcome.status.ok()) {
        counters.committed_batches += 1;
        counters.commit_seconds_total += write_seconds;
        counters.committed_records += merged.records.size();
        counters.committed_intervals += outcome.intervals_written;
        counters.committed_events += outcome.events_written;
        counters.failing = false;
        resolved_seq = std::max(resolved_seq, taken.back().seq);
        if (backoff.count() > 0) {
          messages.push_back("trend writer: writing again after a failure; backlog now " +
                             std::to_string(queued_weight) + " items");
        }
        backoff = std::chrono::milliseconds(0);
        retry_at = Clock::time_point{};
      } else if (outcome.retryable && !stopping) {
        counters.failed_attempts += 1;
        counters.failing = true;
        for (auto it = taken.rbegin(); it != taken.rend(); ++it) {
          queued_weight += it->Weight();
          queue.push_front(std::move(*it));
        }
        backoff =
            backoff.count() == 0 ? options.retry_initial : std::min(options.retry_max, backoff * 2);
        retry_at = Clock::now() + backoff;
        messages.push_back(outcome.status.message() + "; keeping " + std::to_string(queued_weight) +
                           " items in memory, retrying in " + std::to_string(backoff.count()) +
                           " ms");
        while (queued_weight > options.max_backlog_items) DropFront(messages, "backlog full");
      } else {
        for (auto it = taken.rbegin(); it != taken.rend(); ++it) {
          queued_weight += it->Weight();
          queue.push_front(std::move(*it));
        }
        for (std::size_t i = 0; i < taken.size(); ++i) {
          DropFront(messages,
                    stopping ? "stopping while the database fails" : "the database refused them");
        }
        messages.push_back(outcome.status.message());
      }
      progress.notify_all();
      lock.unlock();
      for (const auto& m : messages) {
        Log(outcome.status.ok() ? LogLevel::kInfo : LogLevel::kError, m);
      }
      lock.lock();
      continue;
    }
    if (stopping && queue.empty() && tasks.empty()) break;
  }
  progress.notify_all();
}

Result<std::unique_ptr<TrendWriter>> TrendWriter::Start(TrendStore store, WriterOptions options,
                                                        LogCallback log, CommitCallback on_commit) {
  if (auto ok = options.Validate(); !ok) return Error{ok.message()};
  auto shared = std::make_unique<Shared>(std::move(store), std::move(options), std::move(log),
                                         std::move(on_commit));
  Shared* raw = shared.get();
  shared->thread = std::thread([raw] {
    // Named for `top -H` and the end-to-end bench (at most 15 characters on Linux).
    ::pthread_setname_np(::pthread_self(), "spw-storage");
    raw->Run();
  });
  return std::unique_ptr<TrendWriter>(new TrendWriter(std::move(shared)));
}

TrendWriter::TrendWriter(std::unique_ptr<Shared> shared) : shared_(std::move(shared)) {}

TrendWriter::~TrendWriter() { Stop(); }

void TrendWriter::Stop() {
  {
    std::lock_guard lock(shared_->mutex);
    shared_->stopping = true;
  }
  shared_->wake.notify_all();
  if (shared_->thread.joinable()) shared_->thread.join();
}

bool TrendWriter::Submit(WriteBatch batch) {
  Shared& s = *shared_;
  std::vector<std::string> messages;
  bool kept_all = true;
  {
    std::lock_guard lock(s.mutex);
    if (s.stopping) {
      s.counters.dropped_records += batch.records.size();
      s.counters.dropped_events += batch.events.size();
      s.counters.dropped_states += batch.states.size();
      messages.push_back("trend writer is stopped; dropped a batch of " +
                         std::to_string(batch.records.size()) + " records");
      kept_all = false;
    } else {
      Item item{s.next_seq++, std::move(batch)};
      std::size_t weight = item.Weight();
      if (s.queue.empty()) s.first_queued = Clock::now();
      // Alarm events wait for no batch: the outbox row that messaging publishes is written in
      // the same commit, so a batch delay would add up to max_batch_delay to every alarm.
      if (!item.batch.events.empty()) s.first_queued = Clock::now() - s.options.max_batch_delay;
      s.queue.push_back(std::move(item));
      s.queued_weight += weight;
      while (s.queued_weight + s.in_flight_weight > s.options.max_backlog_items &&
             s.queue.size() > 1) {
        s.DropFront(messages, "backlog full");
        kept_all = false;
      }
    }
  }
  s.wake.notify_one();
  for (const auto& m : messages) s.Log(LogLevel::kError, m);
  return kept_all;
}

void TrendWriter::Post(std::function<void(TrendStore&)> task) {
  {
    std::lock_guard lock(shared_->mutex);
    shared_->tasks.push_back(std::move(task));
    shared_->tasks_posted += 1;
  }
  shared_->wake.notify_one();
}

bool TrendWriter::Flush(std::chrono::milliseconds timeout) {
  Shared& s = *shared_;
  std::unique_lock lock(s.mutex);
  std::uint64_t target = s.next_seq - 1;
  std::uint64_t tasks_target = s.tasks_posted;
  // Ask for the batch now rather than after max_batch_delay.
  s.first_queued = Clock::now() - s.options.max_batch_delay;
  s.wake.notify_one();
  return s.progress.wait_for(
      lock, timeout, [&] { return s.resolved_seq >= target && s.tasks_run >= tasks_target; });
}

WriterCounters TrendWriter::counters() const {
  std::lock_guard lock(shared_->mutex);
  WriterCounters c = shared_->counters;
  c.backlog_items = shared_->queued_weight + shared_->in_flight_weight;
  return c;
}

}  // namespace spinward::storage
