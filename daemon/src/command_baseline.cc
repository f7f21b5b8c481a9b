// `spinward baseline POINT --start|--show [--period 7d] (--db FILE | --config FILE)`: learned
// baselines (storage/baseline_store.h). --start marks a learning period from now (after
// commissioning or maintenance, with the machine in good condition); --show learns every baseline
// of the point whose period has ended and prints them with their provenance.
#include <cstdio>
#include <string>
#include <string_view>

#include "commands.h"
#include "spinward/config/site_loader.h"
#include "spinward/storage/baseline_store.h"
#include "spinward/storage/time_text.h"

namespace spinward::daemon {
namespace {

constexpr std::string_view kUsage = R"(usage: spinward baseline POINT (--start | --show) [options]

Learned baselines: each measure's median and MAD over a learning period in good condition, and
advisory statistical limits from them (alert = median + 3 x spread, danger = median + 6 x spread,
spread = MAD x 1.4826, at least 5 % of the median). Site maintenance rules prevail.

  --start        start learning now, for every measure the point has stored
  --show         learn the baselines whose period has ended, then list the point's baselines
  --period P     with --start: how long to learn, e.g. 7d, 24h, 2w (default 7d)
  --db FILE      the trend database the daemon writes
  --config FILE  or the site file: its storage path is used
  --help         this text

Exit status: 0 on success, 2 for a bad option, 1 on an error.
)";

std::string Number(const std::optional<double>& value) {
  if (!value) return "-";
  char text[32];
  std::snprintf(text, sizeof(text), "%.6g", *value);
  return text;
}

}  // namespace

int CommandBaseline(const Arguments& args) {
  std::string point, db, config_path, period = "7d";
  bool start = false;
  bool show = false;
  for (std::size_t i = 0; i < args.size(); ++i) {
    const std::string& a = args[i];
    if (a == "--help" || a == "-h") {
      std::fputs(kUsage.data(), stdout);
      return 0;
    }
    if (a == "--start" || a == "--show") {
      (a == "--start" ? start : show) = true;
      continue;
    }
    if (!a.starts_with("--")) {
      if (!point.empty()) {
        std::fprintf(stderr, "spinward baseline: one POINT only, got '%s' and '%s'\n",
                     point.c_str(), a.c_str());
        return 2;
      }
      point = a;
      continue;
    }
    std::string* target = a == "--db"       ? &db
                          : a == "--config" ? &config_path
                          : a == "--period" ? &period
                                            : nullptr;
    if (target == nullptr) {
      std::fprintf(stderr, "spinward baseline: unknown option '%s' (spinward baseline --help)\n",
                   a.c_str());
      return 2;
    }
    if (i + 1 >= args.size()) {
      std::fprintf(stderr, "spinward baseline: option %s needs a value\n", a.c_str());
      return 2;
    }
    *target = args[++i];
  }
  if (point.empty() || start == show) {
    std::fprintf(stderr,
                 "spinward baseline: POINT and one of --start or --show are required "
                 "(spinward baseline --help)\n");
    return 2;
  }
  if (db.empty() == config_path.empty()) {
    std::fprintf(stderr, "spinward baseline: give --db FILE or --config FILE\n");
    return 2;
  }
  if (!config_path.empty()) {
    config::LoadedSite loaded = config::LoadSiteFile(config_path);
    if (!loaded.ok()) {
      std::fprintf(stderr, "spinward baseline: %s has problems (spinward check-config %s)\n",
                   config_path.c_str(), config_path.c_str());
      return 1;
    }
    if (loaded.site.FindPoint(point) == nullptr) {
      std::fprintf(stderr, "spinward baseline: %s has no point '%s'\n", config_path.c_str(),
                   point.c_str());
      return 1;
    }
    db = loaded.site.storage.path;
  }
  const std::int64_t now = storage::WallClockNowNs();
  auto store = storage::BaselineStore::Open(db);
  if (!store) {
    std::fprintf(stderr, "spinward baseline: %s\n", store.message().c_str());
    return 1;
  }
  if (start) {
    // "7d" as a time argument means 7 days before now: its distance from now is the period.
    auto before = storage::ParseTimeArgument(period, now);
    if (!before || *before >= now) {
      std::fprintf(stderr, "spinward baseline: --period '%s' is not a duration like 7d or 24h\n",
                   period.c_str());
      return 2;
    }
    const std::int64_t end = now + (now - *before);
    auto marked = store->Start(point, now, end);
    if (!marked) {
      std::fprintf(stderr, "spinward baseline: %s\n", marked.message().c_str());
      return 1;
    }
    std::printf("learning %d measure%s of %s from %s until %s\n", *marked, *marked == 1 ? "" : "s",
                point.c_str(), storage::FormatIsoUtc(now).c_str(),
                storage::FormatIsoUtc(end).c_str());
    return 0;
  }
  auto learned = store->Learn(point, now);
  if (!learned) {
    std::fprintf(stderr, "spinward baseline: %s\n", learned.message().c_str());
    return 1;
  }
  auto rows = store->Rows(point);
  if (!rows) {
    std::fprintf(stderr, "spinward baseline: %s\n", rows.message().c_str());
    return 1;
  }
  if (rows->empty()) {
    std::printf("%s has no baseline; start one with spinward baseline %s --start\n", point.c_str(),
                point.c_str());
    return 0;
  }
  std::printf("%-24s %10s %10s %6s %10s %10s  %s\n", "measure", "median", "mad", "count", "alert",
              "danger", "period / learned");
  for (const auto& row : *rows) {
    std::string when =
        storage::FormatIsoUtc(row.start_ns) + " to " + storage::FormatIsoUtc(row.end_ns) +
        (row.learned_ns ? ", learned " + storage::FormatIsoUtc(*row.learned_ns)
         : row.end_ns > now
             ? ", learning"
             : ", fewer than " + std::to_string(storage::BaselineStore::kMinIntervals) +
                   " intervals stored");
    std::printf("%-24s %10s %10s %6lld %10s %10s  %s\n", row.measure.c_str(),
                Number(row.median).c_str(), Number(row.mad).c_str(),
                static_cast<long long>(row.count), Number(row.alert).c_str(),
                Number(row.danger).c_str(), when.c_str());
  }
  return 0;
}

}  // namespace spinward::daemon
