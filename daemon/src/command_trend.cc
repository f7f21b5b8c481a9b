// `spinward trend --db FILE --point P --band B [--since T] [--until T] [--level L] [--format F]`:
// one measure's trend from the database, raw intervals or hourly/daily roll-ups. Reads through its
// own read-only connection, so it runs while the daemon writes.
#include <cstdio>
#include <string>
#include <string_view>

#include "commands.h"
#include "option_reader.h"
#include "spinward/storage/query_report.h"
#include "spinward/storage/time_text.h"
#include "spinward/storage/trend_store.h"

namespace spinward::daemon {
namespace {

constexpr std::string_view kUsage = R"(usage: spinward trend --db FILE --point P --band B [options]

Prints one measure's trend: raw interval values, or hourly or daily roll-ups (mean, min, max and
count of the intervals; intervals flagged as sensor faults are counted apart, not averaged).

  --db FILE      the trend database the daemon writes
  --point P      measurement point, e.g. P-101
  --band B       band or indicator name, e.g. velocity_rms_10_1000 or overall_rms
  --since T      from this time: ISO 8601 UTC (2026-03-02T10:00Z, 2026-03-02) or relative to now
                 (24h, 7d, 2w); default 24h
  --until T      up to (not including) this time; default now
  --level L      raw (default), hourly or daily
  --format F     csv (default) or json
  --help         this text

Exit status: 0 on success, 2 for a bad option, 1 when the database cannot be read.
)";

}  // namespace

int CommandTrend(const Arguments& args) {
  auto options = OptionReader::Parse(
      args, {"--db", "--point", "--band", "--since", "--until", "--level", "--format"}, {"--help"});
  if (!options.ok()) {
    std::fprintf(stderr, "spinward trend: %s\n", options.message().c_str());
    return 2;
  }
  if (options->Has("--help")) {
    std::fputs(kUsage.data(), stdout);
    return 0;
  }
  if (!options->positional().empty()) {
    std::fprintf(stderr, "spinward trend: unexpected argument '%s' (spinward trend --help)\n",
                 options->positional().front().c_str());
    return 2;
  }
  for (const char* required : {"--db", "--point", "--band"}) {
    if (!options->Value(required)) {
      std::fprintf(stderr, "spinward trend: %s is required (spinward trend --help)\n", required);
      return 2;
    }
  }
  const std::string db = *options->Value("--db"), point = *options->Value("--point"),
                    band = *options->Value("--band");
  const std::string since = options->Value("--since").value_or("24h");
  const std::string until = options->Value("--until").value_or("now");
  const std::string level = options->Value("--level").value_or("raw");
  const std::string format = options->Value("--format").value_or("csv");
  const std::int64_t now = storage::WallClockNowNs();
  auto since_ns = storage::ParseTimeArgument(since, now);
  auto until_ns = storage::ParseTimeArgument(until, now);
  auto level_value = storage::ParseTrendLevel(level);
  auto format_value = storage::ParseReportFormat(format);
  for (const Status& s :
       {since_ns.status(), until_ns.status(), level_value.status(), format_value.status()}) {
    if (!s.ok()) {
      std::fprintf(stderr, "spinward trend: %s\n", s.message().c_str());
      return 2;
    }
  }
  auto store = storage::TrendStore::OpenReadOnly(db);
  if (!store) {
    std::fprintf(stderr, "spinward trend: %s\n", store.message().c_str());
    return 1;
  }
  storage::TrendQuery query{point, band, *since_ns, *until_ns, *level_value};
  auto rows = store->Trend(query);
  if (!rows) {
    std::fprintf(stderr, "spinward trend: %s\n", rows.message().c_str());
    return 1;
  }
  std::string unit;
  if (auto status = store->CurrentStatus(); status.ok()) {
    for (const auto& m : *status) {
      if (m.point_id == point && m.measure == band) unit = m.unit;
    }
  }
  std::fputs(storage::RenderTrend(query, unit, *rows, *format_value).c_str(), stdout);
  return 0;
}

}  // namespace spinward::daemon
