#include "trend_backend.h"

#include "site_judgement.h"
#include "spinward/storage/trend_store.h"

namespace spinward::daemon {

class TrendBackend::WriterSubmitter final : public BatchSubmitter {
 public:
  explicit WriterSubmitter(storage::TrendWriter& writer) : writer_(writer) {}
  bool Submit(storage::WriteBatch batch) override { return writer_.Submit(std::move(batch)); }

 private:
  storage::TrendWriter& writer_;
};

Result<std::unique_ptr<TrendBackend>> TrendBackend::Open(const config::SiteConfig& site, Log log,
                                                         std::shared_ptr<OutboxNotifier> outbox) {
  std::unique_ptr<TrendBackend> backend(new TrendBackend());
  backend->path_ = site.storage.path;
  backend->log_ = std::move(log);
  const auto options = StoreOptionsFromSite(site);
  auto store = storage::TrendStore::Open(site.storage.path, options);
  if (!store.ok()) return Error{store.message()};
  auto learned = ReadLearnedBaselines(site.storage.path);
  if (!learned.ok()) return Error{learned.message()};
  auto judgements = JudgementsFromSite(site, *learned);
  if (!judgements.ok()) return Error{judgements.message()};
  auto states = store->LoadAlarmStates();
  if (!states.ok()) return Error{states.message()};
  auto acks = store->AcknowledgementsAfter(0);
  if (!acks.ok()) return Error{acks.message()};

  auto* raw = backend.get();
  storage::WriterOptions writer_options;
  if (outbox) writer_options.on_events_committed = [outbox] { outbox->Notify(); };
  auto writer =
      storage::TrendWriter::Start(std::move(store).value(), std::move(writer_options),
                                  [raw](storage::LogLevel level, const std::string& message) {
                                    if (!raw->log_) return;
                                    raw->log_(level == storage::LogLevel::kError     ? "error"
                                              : level == storage::LogLevel::kWarning ? "warn"
                                                                                     : "info",
                                              "storage: " + message);
                                  });
  if (!writer.ok()) return Error{writer.message()};
  backend->writer_ = std::move(writer).value();
  backend->submitter_ = std::make_unique<WriterSubmitter>(*backend->writer_);
  auto stage = AlarmStage::Create(
      *judgements, *states, *backend->submitter_,
      [raw](const AlarmTransition& t, const std::string& event_id) {
        if (raw->log_) {
          raw->log_(IsMachineState(t.to) && t.to != AlarmState::kNormal ? "warn" : "info",
                    "alarm " + event_id + " " + t.point_id + "/" + t.measure + ": " +
                        std::string(ToString(t.from)) + " -> " + std::string(ToString(t.to)) +
                        ": " + t.message);
        }
      });
  if (!stage.ok()) return Error{stage.message()};
  backend->stage_ = std::move(stage).value();
  // Acknowledgements given while the daemon was down reach the alarms they were meant for (the
  // stage ignores an acknowledgement older than the alarm it would touch).
  for (const auto& ack : *acks) {
    backend->stage_->Acknowledge(ack.point_id, ack.measure, ack.by, ack.note, ack.time_ns)
        .IgnoreError();
    backend->last_ack_id_ = ack.ack_id;
  }
  return backend;
}

TrendBackend::~TrendBackend() { Stop(); }

void TrendBackend::ApplyNewAcknowledgements() {
  // A read connection of its own: the writer thread owns the write connection.
  if (!reader_) {
    storage::StoreOptions options;
    options.quick_check_on_open = false;  // checked once at start; not on every poll
    auto reader = storage::TrendStore::OpenReadOnly(path_, options);
    if (!reader.ok()) return;
    reader_ = std::make_unique<storage::TrendStore>(std::move(reader).value());
  }
  auto acks = reader_->AcknowledgementsAfter(last_ack_id_);
  if (!acks.ok()) return;
  for (const auto& ack : *acks) {
    Status applied = stage_->Acknowledge(ack.point_id, ack.measure, ack.by, ack.note, ack.time_ns);
    if (log_) {
      log_(applied.ok() ? "info" : "warn",
           "acknowledgement by " + ack.by + " of " + ack.point_id +
               (ack.measure.empty() ? "" : "/" + ack.measure) +
               (applied.ok() ? " applied" : ": " + applied.message()));
    }
    last_ack_id_ = ack.ack_id;
  }
}

// Learned baselines take effect here too: `spinward baseline POINT --show` learns them, a reload
// (SIGHUP) applies them.
Status TrendBackend::Reconfigure(const config::SiteConfig& site) {
  auto learned = ReadLearnedBaselines(path_);
  if (!learned.ok()) return Status::Fail(learned.message());
  auto judgements = JudgementsFromSite(site, *learned);
  if (!judgements.ok()) return Status::Fail(judgements.message());
  return stage_->Reconfigure(*judgements);
}

void TrendBackend::Tick(std::int64_t now_ns) {
  if (stopped_) return;
  stage_->CheckStale(now_ns);
  ApplyNewAcknowledgements();
}

void TrendBackend::Stop(std::chrono::milliseconds timeout) {
  if (stopped_ || !writer_) return;
  stopped_ = true;
  if (!writer_->Flush(timeout) && log_) {
    const auto c = writer_->counters();
    log_("error", "storage: " + std::to_string(c.backlog_items) +
                      " items still not written at shutdown (" + path_ + ")");
  }
  writer_->Stop();
}

}  // namespace spinward::daemon
