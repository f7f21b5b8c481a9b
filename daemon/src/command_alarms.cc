// `spinward alarms --db FILE [--since T] [--open] [--format F]`: alarm events from the database,
// oldest first; --open keeps the latest event of each alarm that is still active or latched.
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

constexpr std::string_view kUsage = R"(usage: spinward alarms --db FILE [options]

Lists alarm events (state changes of a point's measure), oldest first. Alarms are advisory: site
maintenance rules and protection systems prevail.

  --db FILE      the trend database the daemon writes
  --since T      from this time: ISO 8601 UTC or relative to now (24h, 7d); default 7d
  --open         only alarms still active or latched (the latest event of each)
  --format F     csv (default) or json
  --help         this text

Exit status: 0 on success, 2 for a bad option, 1 when the database cannot be read.
)";

}  // namespace

int CommandAlarms(const Arguments& args) {
  auto options = OptionReader::Parse(args, {"--db", "--since", "--format"}, {"--help", "--open"});
  if (!options.ok()) {
    std::fprintf(stderr, "spinward alarms: %s\n", options.message().c_str());
    return 2;
  }
  if (options->Has("--help")) {
    std::fputs(kUsage.data(), stdout);
    return 0;
  }
  if (!options->positional().empty()) {
    std::fprintf(stderr, "spinward alarms: unexpected argument '%s' (spinward alarms --help)\n",
                 options->positional().front().c_str());
    return 2;
  }
  if (!options->Value("--db")) {
    std::fprintf(stderr, "spinward alarms: --db is required (spinward alarms --help)\n");
    return 2;
  }
  const std::string db = *options->Value("--db");
  const std::string since = options->Value("--since").value_or("7d");
  const std::string format = options->Value("--format").value_or("csv");
  const bool open_only = options->Has("--open");
  auto since_ns = storage::ParseTimeArgument(since, storage::WallClockNowNs());
  auto format_value = storage::ParseReportFormat(format);
  for (const Status& s : {since_ns.status(), format_value.status()}) {
    if (!s.ok()) {
      std::fprintf(stderr, "spinward alarms: %s\n", s.message().c_str());
      return 2;
    }
  }
  auto store = storage::TrendStore::OpenReadOnly(db);
  if (!store) {
    std::fprintf(stderr, "spinward alarms: %s\n", store.message().c_str());
    return 1;
  }
  auto events = store->Alarms(*since_ns, open_only);
  if (!events) {
    std::fprintf(stderr, "spinward alarms: %s\n", events.message().c_str());
    return 1;
  }
  std::fputs(storage::RenderAlarms(*events, *format_value).c_str(), stdout);
  return 0;
}

}  // namespace spinward::daemon
