// `spinward run --config FILE`: the daemon in the foreground. Signals are taken synchronously on
// the main thread (blocked everywhere else before any thread starts): SIGTERM/SIGINT stop
// gracefully, flushing every interval in progress; SIGHUP reloads the configuration file.
#include <signal.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <ctime>
#include <fstream>
#include <memory>

#include "commands.h"
#include "daemon_logging.h"
#include "log_sink.h"
#include "option_reader.h"
#include "run_outlets.h"
#include "service_notifier.h"
#include "spinward/config/site_diff.h"
#include "spinward/config/site_loader.h"
#include "spinward/daemon/json_lines_sink.h"
#include "spinward/daemon/monitoring_service.h"
#include "spinward/daemon/outbox_notifier.h"
#include "trend_backend.h"

namespace spinward::daemon {
namespace {

constexpr const char* kRunHelp =
    "usage: spinward run --config FILE [options]\n"
    "\n"
    "Runs the daemon in the foreground: listens for frames, watches the drop directory, computes\n"
    "spectra, band values and indicators per point, and writes a record per averaging interval.\n"
    "SIGTERM or SIGINT: stop, flushing the intervals in progress. SIGHUP: reload the "
    "configuration\n"
    "(an invalid file is refused and the running configuration kept).\n"
    "\n"
    "options:\n"
    "  --config FILE        the site configuration (YAML; see docs/configuration.md)\n"
    "  --log-level LEVEL    trace, debug, info, warn or error (default: from the configuration)\n"
    "  --records FILE       also append every record to FILE as JSON lines (docs/records.md)\n"
    "  --with-spectra       include the averaged spectrum in each JSON-lines record\n"
    "  --workers N          processing threads (default: one per core)\n"
    "  --ready-file FILE    once listening, write the bound listeners to FILE (for scripts)\n"
    "\n"
    "Advisory: Spinward is not a protection system; site maintenance rules prevail.\n";

std::string LevelName(config::LogLevel level) { return std::string(config::ToString(level)); }

void WriteReadyFile(const std::string& path, const MonitoringService& service,
                    std::uint16_t health_port) {
  std::ofstream out(path + ".tmp");
  out << "{\"pid\":" << ::getpid() << ",\"listeners\":[";
  bool first = true;
  for (const auto& l : service.Listeners()) {
    out << (first ? "" : ",") << "{\"transport\":\"" << (l.tcp ? "tcp" : "udp")
        << "\",\"port\":" << l.port << "}";
    first = false;
  }
  out << "],\"health_port\":" << health_port << "}\n";
  out.close();
  std::rename((path + ".tmp").c_str(), path.c_str());  // readers never see a half-written file
}

}  // namespace

int CommandRun(const Arguments& args) {
  auto options = OptionReader::Parse(
      args, {"--config", "--log-level", "--records", "--workers", "--ready-file"},
      {"--help", "--with-spectra"});
  if (!options.ok()) {
    std::fprintf(stderr, "spinward run: %s\n", options.message().c_str());
    return 2;
  }
  if (options->Has("--help")) {
    std::fputs(kRunHelp, stdout);
    return 0;
  }
  auto config_path = options->Value("--config");
  if (!config_path) {
    std::fprintf(stderr, "spinward run: --config FILE is required\n");
    return 2;
  }
  auto workers = options->Integer("--workers", 0, 0, 1024);
  if (!workers.ok()) {
    std::fprintf(stderr, "spinward run: %s\n", workers.message().c_str());
    return 2;
  }

  auto loaded = config::LoadSiteFile(*config_path);
  if (!loaded.ok()) {
    for (const auto& problem : loaded.problems)
      std::fprintf(stderr, "%s\n", problem.ToString().c_str());
    std::fprintf(stderr, "spinward run: %s is not valid; not starting\n", config_path->c_str());
    return 1;
  }
  const std::string level =
      options->Value("--log-level").value_or(LevelName(loaded.site.logging.level));
  if (Status s = SetUpLogging(level, loaded.site.logging.file); !s.ok()) {
    std::fprintf(stderr, "spinward run: %s\n", s.message().c_str());
    return 2;
  }

  // Block the signals before any thread starts, so only sigtimedwait below receives them.
  sigset_t signals;
  sigemptyset(&signals);
  sigaddset(&signals, SIGINT);
  sigaddset(&signals, SIGTERM);
  sigaddset(&signals, SIGHUP);
  pthread_sigmask(SIG_BLOCK, &signals, nullptr);

  auto sinks = std::make_shared<FanOutSink>();
  auto log_sink = std::make_shared<LogSink>();
  sinks->Add(log_sink);
  if (auto records = options->Value("--records")) {
    auto json = JsonLinesSink::Open(*records, options->Has("--with-spectra"));
    if (!json.ok()) {
      LogLine("error", json.message());
      return 1;
    }
    sinks->Add(*json);
  }

  // Trend storage and alarms: a database that is corrupt or from a newer version stops the start.
  // The writer tells the MQTT publisher of committed alarms through `outbox`, so they need not
  // wait for its outbox poll.
  auto outbox = std::make_shared<OutboxNotifier>();
  auto backend = TrendBackend::Open(loaded.site, LogLine, outbox);
  if (!backend.ok()) {
    LogLine("error", "cannot start: " + backend.message());
    return 1;
  }
  sinks->Add((*backend)->Sink());
  LogLine("info", "trends and alarms in " + (*backend)->path());
  // Messaging and the health endpoint (docs/messaging.md, docs/health.md).
  auto outlets = RunOutlets::Start(loaded.site, LogLine, outbox);
  if (!outlets.ok()) {
    LogLine("error", "cannot start: " + outlets.message());
    return 1;
  }
  if (auto bands = (*outlets)->BandSink()) sinks->Add(bands);

  ServiceOptions service_options;
  service_options.worker_threads = static_cast<std::size_t>(*workers);
  service_options.sink = sinks;
  service_options.log = LogLine;
  auto service = MonitoringService::Create(loaded.site, service_options);
  if (!service.ok()) {
    LogLine("error", "cannot start: " + service.message());
    return 1;
  }
  if (Status s = (*service)->Start(); !s.ok()) {
    LogLine("error", "cannot start: " + s.message());
    (*service)->Stop();
    return 1;
  }
  LogLine("info", "spinward running for site '" + loaded.site.site.name + "' with " +
                      std::to_string(loaded.site.points.size()) + " points");
  (*outlets)->StartHealth(**service, **backend);
  if (auto ready = options->Value("--ready-file"))
    WriteReadyFile(*ready, **service, (*outlets)->HealthPort());
  // systemd (Type=notify): ready once the listeners are bound; keep-alives from this loop.
  auto notifier = ServiceNotifier::FromEnvironment();
  notifier.Ready("monitoring " + std::to_string(loaded.site.points.size()) + " points");
  const auto loop_wait = notifier.watchdog_interval()
                             ? std::min<std::chrono::microseconds>(
                                   *notifier.watchdog_interval() / 4, std::chrono::seconds(1))
                             : std::chrono::microseconds(std::chrono::seconds(1));

  auto last_summary = std::chrono::steady_clock::now();
  auto last_tick = std::chrono::steady_clock::now();
  for (;;) {
    notifier.KeepAlive(std::chrono::steady_clock::now());
    timespec timeout{static_cast<time_t>(loop_wait.count() / 1'000'000),
                     static_cast<long>(loop_wait.count() % 1'000'000) * 1000};
    int sig = sigtimedwait(&signals, nullptr, &timeout);
    if (sig == SIGINT || sig == SIGTERM) {
      LogLine("info", std::string("received ") + (sig == SIGINT ? "SIGINT" : "SIGTERM") +
                          ": flushing intervals and stopping");
      notifier.Stopping();
      break;
    }
    if (sig == SIGHUP) {
      notifier.Reloading();
      auto next = config::LoadSiteFile(*config_path);
      if (!next.ok()) {
        for (const auto& problem : next.problems) LogLine("error", "reload: " + problem.ToString());
        LogLine("error", "reload refused: " + *config_path +
                             " is not valid; the running configuration stays");
      } else {
        const auto diff = config::DiffSites((*service)->site(), next.site);
        if (diff.storage_changed) {
          LogLine("warn", "reload: storage settings changed; they take effect at the next start");
        }
        if (diff.outlets_changed) {
          LogLine("warn",
                  "reload: health or messaging settings changed; they take effect at the next "
                  "start");
        }
        auto summary = (*service)->Reload(next.site);
        if (!summary.ok()) {
          LogLine("error", "reload refused: " + summary.message());
        } else if (Status alarms = (*backend)->Reconfigure(next.site); !alarms.ok()) {
          LogLine("error",
                  "reload: points reloaded but the alarm rules were refused (the old ones "
                  "stay): " +
                      alarms.message());
        } else {
          LogLine("info", "reloaded: " + std::to_string(summary->kept.size()) + " points kept, " +
                              std::to_string(summary->restarted.size()) + " restarted, " +
                              std::to_string(summary->added.size()) + " added, " +
                              std::to_string(summary->removed.size()) + " removed");
          (*outlets)->SiteChanged(**service);
          if (auto ready = options->Value("--ready-file"))
            WriteReadyFile(*ready, **service, (*outlets)->HealthPort());
        }
      }
      notifier.Ready("monitoring " + std::to_string((*service)->site().points.size()) +
                     " points");  // after a refused reload too: the old configuration serves on
    }
    if (std::chrono::steady_clock::now() - last_tick >= std::chrono::seconds(2)) {
      last_tick = std::chrono::steady_clock::now();
      (*backend)->Tick(std::chrono::duration_cast<std::chrono::nanoseconds>(
                           std::chrono::system_clock::now().time_since_epoch())
                           .count());
    }
    if (std::chrono::steady_clock::now() - last_summary >= std::chrono::seconds(60)) {
      last_summary = std::chrono::steady_clock::now();
      auto points = (*service)->PointTotals();
      auto sources = (*service)->Sources();
      LogLine("info", "last totals: frames " + std::to_string(sources.frames) + ", bad frames " +
                          std::to_string(sources.bad_frames) + ", records " +
                          std::to_string(points.records) + ", rejected blocks " +
                          std::to_string(points.rejected_rate + points.rejected_non_finite +
                                         points.rejected_other) +
                          ", sequence gaps " + std::to_string(points.sequence_gaps));
    }
  }
  (*outlets)->StopHealth();
  (*service)->Stop();
  (*backend)->Stop();
  (*outlets)->StopMessaging();
  const auto stored = (*backend)->Counters();
  LogLine("info", "storage: " + std::to_string(stored.committed_records) + " records committed, " +
                      std::to_string(stored.dropped_records) + " dropped");
  LogLine("info", "stopped; " + std::to_string(log_sink->records()) + " records written");
  return 0;
}

}  // namespace spinward::daemon
