#include "spinward/daemon/monitoring_service.h"

#include <mutex>

#include "spinward/config/site_diff.h"
#include "spinward/daemon/drop_directory.h"
#include "spinward/daemon/network_listener.h"
#include "spinward/daemon/site_settings.h"

namespace spinward::daemon {
namespace {

RecordingFormat ToRecordingFormat(config::FileFormat format) {
  switch (format) {
    case config::FileFormat::kWav:
      return RecordingFormat::kWav;
    case config::FileFormat::kCsv:
      return RecordingFormat::kCsv;
    case config::FileFormat::kRawFloat32:
      return RecordingFormat::kRawFloat32;
    case config::FileFormat::kRawInt16:
      return RecordingFormat::kRawInt16;
    case config::FileFormat::kFrames:
      return RecordingFormat::kAuto;
  }
  return RecordingFormat::kAuto;
}

DropDirectoryOptions DropOptionsFromSite(const config::SiteConfig& site) {
  DropDirectoryOptions options;
  const auto& drop = *site.drop_directory;
  options.path = drop.path;
  options.poll_interval =
      std::chrono::milliseconds(static_cast<std::int64_t>(drop.poll_interval_s * 1000.0));
  for (const auto& file : drop.files) {
    const auto* point = site.FindPoint(file.point);
    if (point == nullptr) continue;  // the loader has already refused such a file
    DropFileRule rule;
    rule.pattern = file.pattern;
    rule.point_id = point->id;
    rule.sensor_id = point->sensor;
    rule.point_sample_rate_hz = point->sample_rate_hz;
    rule.frames = file.format == config::FileFormat::kFrames;
    rule.read.format = ToRecordingFormat(file.format);
    const bool needs_rate = file.format != config::FileFormat::kWav && !rule.frames;
    if (needs_rate)
      rule.read.sample_rate_hz =
          file.sample_rate_hz > 0 ? file.sample_rate_hz : point->sample_rate_hz;
    options.rules.push_back(std::move(rule));
  }
  return options;
}

}  // namespace

struct MonitoringService::Impl {
  config::SiteConfig site;
  ServiceOptions options;
  std::unique_ptr<PointRouter> router;
  std::unique_ptr<RouterConsumer> consumer;
  std::unique_ptr<NetworkThreads> network;
  std::vector<std::unique_ptr<NetworkListener>> listeners;
  std::unique_ptr<DropDirectory> drop;
  bool started = false;
  bool stopped = false;
  // Counters of sources that were replaced by a reload.
  SourceTotals retired;

  void Log(const std::string& level, const std::string& message) {
    if (options.log) options.log(level, message);
  }

  SourceReporter Reporter() {
    return [this](const std::string& source, const std::string& message) {
      Log("warn", source + ": " + message);
    };
  }

  static void Add(SourceTotals& t, const SourceCounters& c) {
    t.frames += c.frames;
    t.bytes += c.bytes;
    t.bad_frames += c.BadFramesTotal();
    t.unknown_sensor += c.unknown_sensor;
    t.dropped_full += c.dropped_full;
    t.paused_full += c.paused_full;
    t.refused_peer += c.refused_peer;
    t.refused_connections += c.refused_connections;
    t.connections += c.connections;
    t.files_done += c.files_done;
    t.files_rejected += c.files_rejected;
    if (t.bad_frames_by_reason.empty()) {
      for (std::size_t r = 0; r < kFrameErrorReasonCount; ++r) {
        t.bad_frames_by_reason.emplace_back(
            std::string(FrameErrorReasonName(static_cast<FrameErrorReason>(r))), 0);
      }
    }
    for (std::size_t r = 0; r < kFrameErrorReasonCount; ++r) {
      t.bad_frames_by_reason[r].second += c.bad_frames[r];
    }
  }

  Status StartListeners() {
    for (auto& options_for_listener : ListenerOptionsFromSite(site)) {
      auto listener =
          std::make_unique<NetworkListener>(*network, options_for_listener, *consumer, Reporter());
      if (Status s = listener->Start(); !s.ok()) return s;
      Log("info", "listening on " + listener->Describe());
      listeners.push_back(std::move(listener));
    }
    return Status::Ok();
  }

  void StopListeners() {
    for (auto& listener : listeners) {
      listener->Stop();
      Add(retired, listener->counters());
    }
    listeners.clear();
  }

  Status StartDrop() {
    if (!site.drop_directory) return Status::Ok();
    drop = std::make_unique<DropDirectory>(DropOptionsFromSite(site), *consumer, Reporter());
    if (Status s = drop->Start(); !s.ok()) return s;
    Log("info", "watching " + drop->Describe());
    return Status::Ok();
  }

  void StopDrop() {
    if (!drop) return;
    drop->Stop();
    Add(retired, drop->counters());
    drop.reset();
  }
};

MonitoringService::MonitoringService(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}

MonitoringService::~MonitoringService() { Stop(); }

Result<std::unique_ptr<MonitoringService>> MonitoringService::Create(const config::SiteConfig& site,
                                                                     ServiceOptions options) {
  auto impl = std::make_unique<Impl>();
  impl->site = site;
  impl->options = std::move(options);
  RouterOptions router_options;
  router_options.worker_threads = impl->options.worker_threads;
  router_options.max_queued_samples_per_point = impl->options.max_queued_samples_per_point;
  auto* raw = impl.get();
  impl->router =
      std::make_unique<PointRouter>(router_options, impl->options.sink,
                                    [raw](const std::string& point, const std::string& message) {
                                      raw->Log("warn", "point " + point + ": " + message);
                                    });
  auto configured = impl->router->Configure(PointSettingsFromSite(site));
  if (!configured.ok()) return Error{configured.message()};
  impl->consumer = std::make_unique<RouterConsumer>(*impl->router);
  impl->network = std::make_unique<NetworkThreads>(impl->options.network_threads);
  return std::unique_ptr<MonitoringService>(new MonitoringService(std::move(impl)));
}

Status MonitoringService::Start() {
  if (impl_->started) return Status::Ok();
  impl_->started = true;
  if (Status s = impl_->StartListeners(); !s.ok()) return s;
  impl_->network->Start();
  return impl_->StartDrop();
}

Result<ReloadSummary> MonitoringService::Reload(const config::SiteConfig& next) {
  const auto diff = config::DiffSites(impl_->site, next);
  auto summary = impl_->router->Configure(PointSettingsFromSite(next));
  if (!summary.ok()) return summary;
  const bool restart_listeners = diff.listeners_changed;
  const bool restart_drop = diff.drop_directory_changed || !diff.changed.empty() ||
                            !diff.added.empty() || !diff.removed.empty();
  impl_->site = next;
  if (restart_listeners) {
    impl_->StopListeners();
    if (Status s = impl_->StartListeners(); !s.ok()) return Error{"reload: " + s.message()};
  }
  if (restart_drop) {
    impl_->StopDrop();
    if (Status s = impl_->StartDrop(); !s.ok()) return Error{"reload: " + s.message()};
  }
  return summary;
}

void MonitoringService::Stop() {
  if (impl_->stopped) return;
  impl_->stopped = true;
  impl_->StopDrop();
  impl_->StopListeners();
  impl_->network->Stop();
  impl_->router->FlushAll();
  impl_->router->Stop();
  if (impl_->options.sink) impl_->options.sink->Flush();
}

std::vector<BoundListener> MonitoringService::Listeners() const {
  std::vector<BoundListener> all;
  for (const auto& listener : impl_->listeners) {
    all.push_back(
        {listener->Describe(), listener->Describe().rfind("tcp", 0) == 0, listener->BoundPort()});
  }
  return all;
}

RouterTotals MonitoringService::PointTotals() const { return impl_->router->Totals(); }

SourceTotals MonitoringService::Sources() const {
  SourceTotals totals = impl_->retired;
  for (const auto& listener : impl_->listeners) Impl::Add(totals, listener->counters());
  if (impl_->drop) Impl::Add(totals, impl_->drop->counters());
  return totals;
}

void MonitoringService::Drain() { impl_->router->Drain(); }

const config::SiteConfig& MonitoringService::site() const { return impl_->site; }

}  // namespace spinward::daemon
