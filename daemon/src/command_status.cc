// `spinward status --db FILE [--point P] [--format F]`: the latest value and alarm state of every
// measure of every point (or of one point).
#include <cstdio>
#include <string>
#include <string_view>

#include "commands.h"
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
  std::string db, point, format = "csv";
  for (std::size_t i = 0; i < args.size(); ++i) {
    const std::string& a = args[i];
    if (a == "--help" || a == "-h") {
      std::fputs(kUsage.data(), stdout);
      return 0;
    }
    std::string* target = a == "--db"       ? &db
                          : a == "--point"  ? &point
                          : a == "--format" ? &format
                                            : nullptr;
    if (target == nullptr) {
      std::fprintf(stderr, "spinward status: unknown option '%s' (spinward status --help)\n",
                   a.c_str());
      return 2;
    }
    if (i + 1 >= args.size()) {
      std::fprintf(stderr, "spinward status: option %s needs a value\n", a.c_str());
      return 2;
    }
    *target = args[++i];
  }
  if (db.empty()) {
    std::fprintf(stderr, "spinward status: --db is required (spinward status --help)\n");
    return 2;
  }
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
