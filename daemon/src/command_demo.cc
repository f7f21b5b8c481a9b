// `spinward demo`: the README's main command. Runs the real daemon in-process with the built-in
// site (the invented Larkfield booster pump station) on loopback ports, with trend storage and
// alarms, feeds it a compressed day in which pump P-101's drive-end bearing worsens, then prints
// what it found, a close-up of the failing bearing, and the commands to look further.
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>

#include "commands.h"
#include "demo_close_up.h"
#include "demo_scenario.h"
#include "option_reader.h"
#include "spinward/config/demo_site.h"
#include "spinward/config/site_loader.h"
#include "spinward/daemon/iso_presets.h"
#include "spinward/daemon/json_lines_sink.h"
#include "spinward/daemon/monitoring_service.h"
#include "trend_backend.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;

constexpr const char* kDemoHelp =
    "usage: spinward demo [options]\n"
    "\n"
    "Runs the daemon on loopback with a built-in site, the invented Larkfield water utility's\n"
    "booster pump station (pumps P-101 and P-102, ventilation fan F-201, eight accelerometers),\n"
    "and feeds it a compressed day of hourly snapshots over TCP (pumps) and UDP (fan) in which\n"
    "P-101's drive-end bearing worsens. Trends and alarms go to a SQLite database in DIR.\n"
    "\n"
    "options:\n"
    "  --dir DIR               where to write the site file, database and records (default\n"
    "                          ./spinward-demo; the demo's previous database there is replaced)\n"
    "  --hours N               hours in the demo day (default 24)\n"
    "  --seconds-per-hour S    seconds of signal per point per hour (default 3)\n"
    "  --close-up-seconds S    length of the close-up recording (default 20)\n";

int Fail(const std::string& message, int code) {
  std::fprintf(stderr, "spinward demo: %s\n", message.c_str());
  return code;
}

struct PointDay {
  double first_velocity = NAN, last_velocity = NAN, first_bearing = NAN, last_bearing = NAN;
  std::size_t records = 0;
};

class DaySummarySink final : public RecordSink {
 public:
  void Consume(const storage::MeasurementRecord& record) override {
    std::lock_guard lock(mutex_);
    auto& day = days_[record.point_id];
    ++day.records;
    for (const auto& band : record.bands) {
      const bool first = day.records == 1;
      if (band.name == "velocity") (first ? day.first_velocity : day.last_velocity) = band.rms;
      if (band.name == "bearing") (first ? day.first_bearing : day.last_bearing) = band.rms;
    }
  }
  std::map<std::string, PointDay> Days() const {
    std::lock_guard lock(mutex_);
    return days_;
  }

 private:
  mutable std::mutex mutex_;
  std::map<std::string, PointDay> days_;
};

}  // namespace

int CommandDemo(const Arguments& args) {
  auto opt = OptionReader::Parse(
      args, {"--dir", "--hours", "--seconds-per-hour", "--close-up-seconds"}, {"--help"});
  if (!opt.ok()) return Fail(opt.message(), 2);
  if (opt->Has("--help")) {
    std::fputs(kDemoHelp, stdout);
    return 0;
  }
  const fs::path dir = opt->Value("--dir").value_or("spinward-demo");
  auto hours = opt->Integer("--hours", 24, 2, 24 * 14);
  auto per_hour = opt->Number("--seconds-per-hour", 3.0);
  auto close_up = opt->Number("--close-up-seconds", 20.0);
  for (const Status& s : {hours.status(), per_hour.status(), close_up.status()}) {
    if (!s.ok()) return Fail(s.message(), 2);
  }
  if (!(*per_hour >= 1.0 && *per_hour <= 60.0)) {
    return Fail("--seconds-per-hour '" + *opt->Value("--seconds-per-hour") + "': must be 1 to 60",
                2);
  }
  if (!(*close_up >= 1.0 && *close_up <= 600.0)) {
    return Fail("--close-up-seconds '" + *opt->Value("--close-up-seconds") + "': must be 1 to 600",
                2);
  }

  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) return Fail(dir.string() + ": cannot create directory: " + ec.message(), 1);
  const fs::path db = dir / "larkfield.sqlite";
  for (const char* suffix : {"", "-wal", "-shm"}) fs::remove(db.string() + suffix, ec);
  const fs::path records_path = dir / "records.jsonl";
  fs::remove(records_path, ec);

  config::DemoSiteOptions site_options;
  site_options.storage_path = db.string();
  site_options.interval_s = 1.0;
  const std::string yaml = config::DemoSiteYaml(site_options);
  std::ofstream(dir / "larkfield-site.yaml") << yaml;
  auto loaded = config::ParseSiteText(yaml, (dir / "larkfield-site.yaml").string());
  if (!loaded.ok()) return Fail("built-in site: " + loaded.problems.front().ToString(), 1);

  std::vector<std::string> warnings;
  std::mutex warnings_mutex;
  auto log = [&](const std::string& level, const std::string& message) {
    if (level == "warn" || level == "error") {
      std::lock_guard lock(warnings_mutex);
      if (message.rfind("alarm ", 0) != 0) warnings.push_back(message);
    }
  };
  auto backend = TrendBackend::Open(loaded.site, log);
  if (!backend.ok()) return Fail(backend.message(), 1);
  auto sinks = std::make_shared<FanOutSink>();
  auto summary = std::make_shared<DaySummarySink>();
  sinks->Add(summary);
  sinks->Add((*backend)->Sink());
  auto records = JsonLinesSink::Open(records_path, false);
  if (!records.ok()) return Fail(records.message(), 1);
  sinks->Add(*records);

  ServiceOptions service_options;
  service_options.sink = sinks;
  service_options.log = log;
  auto service = MonitoringService::Create(loaded.site, service_options);
  if (!service.ok()) return Fail(service.message(), 1);
  if (Status s = (*service)->Start(); !s.ok()) return Fail(s.message(), 1);

  const auto began = std::chrono::steady_clock::now();
  DemoScenarioOptions scenario;
  scenario.hours = static_cast<int>(*hours);
  scenario.seconds_per_hour = *per_hour;
  const auto now = std::chrono::system_clock::now();
  const std::int64_t now_ns =
      std::chrono::duration_cast<std::chrono::nanoseconds>(now.time_since_epoch()).count();
  const std::int64_t hour_ns = 3600LL * 1'000'000'000LL;
  scenario.day_start_ns = (now_ns / hour_ns - scenario.hours) * hour_ns;  // the day just past
  std::printf("Spinward demo: Larkfield booster pump station (an invented site)\n");
  std::printf(
      "  daemon on %s, %zu points; sending %d hourly snapshots of %.0f s per point\n",
      [&] {
        std::string where;
        for (const auto& l : (*service)->Listeners())
          where += (where.empty() ? "" : " and ") + l.description;
        return where;
      }()
          .c_str(),
      loaded.site.points.size(), scenario.hours, scenario.seconds_per_hour);
  const bool terminal = ::isatty(STDOUT_FILENO) != 0;
  Status sent = SendDemoDay(**service, scenario, [&](int hour) {
    if (terminal) {
      std::printf("\r  hour %2d of %d sent", hour + 1, scenario.hours);
      std::fflush(stdout);
    }
  });
  if (terminal) std::printf("\n");
  (*service)->Stop();
  (*backend)->Stop();
  if (!sent.ok()) return Fail("feeding the daemon: " + sent.message(), 1);
  const double elapsed =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - began).count();

  const auto points = (*service)->PointTotals();
  const auto sources = (*service)->Sources();
  const auto stored = (*backend)->Counters();
  std::printf(
      "  %llu frames received, %llu bad, %llu dropped; %llu records, %llu committed to the "
      "database in %.1f s\n\n",
      static_cast<unsigned long long>(sources.frames),
      static_cast<unsigned long long>(sources.bad_frames),
      static_cast<unsigned long long>(sources.dropped_full),
      static_cast<unsigned long long>(points.records),
      static_cast<unsigned long long>(stored.committed_records), elapsed);

  std::printf(
      "What changed over the day (velocity RMS 10-1000 Hz, ISO 10816-3 zone; bearing band "
      "1-10 kHz):\n");
  std::printf("  %-11s %-7s %21s %6s %19s\n", "point", "machine", "velocity mm/s", "zone",
              "bearing g");
  for (const auto& point : loaded.site.points) {
    auto days = summary->Days();
    const auto& d = days[point.id];
    const auto* machine = loaded.site.FindMachine(point.machine);
    const auto group =
        machine && machine->iso_group == 1 ? IsoMachineGroup::kGroup1 : IsoMachineGroup::kGroup2;
    const auto support = machine && machine->support == config::MachineSupport::kFlexible
                             ? IsoSupport::kFlexible
                             : IsoSupport::kRigid;
    const char zone = ToChar(ClassifyIsoZone(IsoBoundaries(group, support), d.last_velocity));
    std::printf("  %-11s %-7s %8.2f -> %8.2f %6c %8.3f -> %8.3f\n", point.id.c_str(),
                point.machine.c_str(), d.first_velocity, d.last_velocity, zone, d.first_bearing,
                d.last_bearing);
  }

  auto reader = storage::TrendStore::OpenReadOnly(db.string());
  if (!reader.ok()) return Fail(reader.message(), 1);
  auto alarms = reader->Alarms(0, false);
  if (!alarms.ok()) return Fail(alarms.message(), 1);
  std::printf("\nAlarm events (%zu):\n", alarms->size());
  std::size_t shown = 0;
  for (const auto& event : *alarms) {
    if (shown++ == 12) {
      std::printf("  ... (%zu more: see `spinward alarms`)\n", alarms->size() - 12);
      break;
    }
    std::printf("  %s  %-11s %-9s %s -> %s at %.3g\n", FormatUtc(event.time_ns).c_str(),
                event.point_id.c_str(), event.measure.c_str(), event.from_state.c_str(),
                event.to_state.c_str(), event.value);
  }
  {
    std::lock_guard lock(warnings_mutex);
    if (!warnings.empty()) {
      std::printf("\nDaemon warnings (%zu), first: %s\n", warnings.size(),
                  warnings.front().c_str());
    }
  }

  std::printf("\n");
  if (int rc = RecordingCloseUp(dir, *close_up,
                                DemoSignalFor("P101-DE-H", scenario.hours - 1, scenario.hours));
      rc != 0) {
    return rc;
  }

  const std::string d = db.string();
  std::printf("Output in %s:\n", dir.string().c_str());
  std::printf("  site file   %s\n", (dir / "larkfield-site.yaml").string().c_str());
  std::printf("  database    %s\n", d.c_str());
  std::printf("  records     %s (one JSON line per point and interval)\n\n",
              records_path.string().c_str());
  // The commands below name this binary as it can be run from here (it is not on PATH after a
  // build in the source tree).
  std::error_code no_path;
  const fs::path self = fs::read_symlink("/proc/self/exe", no_path);
  const std::string p = no_path ? std::string("spinward") : self.string();
  const std::string site = (dir / "larkfield-site.yaml").string();
  const std::string review = (dir / "review.html").string();
  std::printf("Look further:\n");
  std::printf("  %s report --db %s --config %s --since 24h --out %s\n", p.c_str(), d.c_str(),
              site.c_str(), review.c_str());
  std::printf("      (the morning review: open the HTML file in a browser)\n");
  std::printf("  %s status --db %s\n", p.c_str(), d.c_str());
  std::printf("  %s alarms --db %s\n", p.c_str(), d.c_str());
  std::printf("  %s trend --db %s --point P101-DE-H --band velocity --since 48h --level hourly\n",
              p.c_str(), d.c_str());
  std::printf("  %s ack P101-DE-H --db %s --by \"your name\" --note \"inspection planned\"\n\n",
              p.c_str(), d.c_str());
  std::printf(
      "Advisory only: Spinward is not a protection system; its alarms support, and never replace, "
      "the\n"
      "site's maintenance rules, protection systems and licensed practice. Follow lock-out and "
      "site\n"
      "procedures before approaching a machine.\n");
  return 0;
}

}  // namespace spinward::daemon
