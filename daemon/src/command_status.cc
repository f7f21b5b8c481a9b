// `spinward status --db FILE [--point P] [--format F]`: the latest value and alarm state of every
// measure of every point (or of one point).
#include <cstdio>
#include <string>
#include <string_view>

#include "commands.h"
#include "option_reader.h"
#include "spinward/storage/query_report.h"
#include "spinward/storage/trend_store.h"

namespace spinward::daemon {
namespace {

constexpr std::string_view kUsage = R"(usage: spinward status --db FILE [options]

Prints the latest value and the alarm state of every measure of every point. Alarms are advisory:
site maintenance rules and protection systems prevail.

  --db FILE      the trend database the daemon writes
  --point P      only this point
  --format F     csv (default) or json
  --help         this text

Exit status: 0 on success, 2 for a bad option, 1 when the database cannot be read.
)";

}  // namespace

int CommandStatus(const Arguments& args) {
  auto options = OptionReader::Parse(args, {"--db", "--point", "--format"}, {"--help"});
  if (!options.ok()) {
    std::fprintf(stderr, "spinward status: %s\n", options.message().c_str());
    return 2;
  }
  if (options->Has("--help")) {
    std::fputs(kUsage.data(), stdout);
    return 0;
  }
  if (!options->positional().empty()) {
    std::fprintf(stderr, "spinward status: unexpected argument '%s' (spinward status --help)\n",
                 options->positional().front().c_str());
    return 2;
  }
  if (!options->Value("--db")) {
    std::fprintf(stderr, "spinward status: --db is required (spinward status --help)\n");
    return 2;
  }
  const std::string db = *options->Value("--db");
  const std::string point = options->Value("--point").value_or("");
  const std::string format = options->Value("--format").value_or("csv");
  auto format_value = storage::ParseReportFormat(format);
  if (!format_value) {
    std::fprintf(stderr, "spinward status: %s\n", format_value.message().c_str());
    return 2;
  }
  auto store = storage::TrendStore::OpenReadOnly(db);
  if (!store) {
    std::fprintf(stderr, "spinward status: %s\n", store.message().c_str());
    return 1;
  }
  auto rows = store->CurrentStatus();
  if (!rows) {
    std::fprintf(stderr, "spinward status: %s\n", rows.message().c_str());
    return 1;
  }
  if (!point.empty()) {
    std::erase_if(*rows, [&](const storage::MeasureStatus& m) { return m.point_id != point; });
    if (rows->empty()) {
      std::fprintf(stderr, "spinward status: point '%s' is not in '%s'\n", point.c_str(),
                   db.c_str());
      return 1;
    }
  }
  std::fputs(storage::RenderStatus(*rows, *format_value).c_str(), stdout);
  return 0;
}

}  // namespace spinward::daemon
