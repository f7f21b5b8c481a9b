// `spinward ack POINT --db FILE [--band B] [--by WHO] [--note TEXT]`: acknowledges a point's
// active or latched alarms in the database. A running daemon picks the acknowledgement up from
// the acknowledgements table; the database's busy timeout covers the daemon's short write locks.
#include <cstdio>
#include <cstdlib>
#include <string>
#include <string_view>

#include "commands.h"
#include "spinward/storage/time_text.h"
#include "spinward/storage/trend_store.h"

namespace spinward::daemon {
namespace {

constexpr std::string_view kUsage = R"(usage: spinward ack POINT --db FILE [options]

Acknowledges the active or latched alarms of POINT (all its measures, or one with --band). A
latched alarm whose value is back to normal is released. Recorded with who and when.

  --db FILE      the trend database the daemon writes
  --band B       only this band or indicator
  --by WHO       who acknowledges; default the USER environment variable
  --note TEXT    a note kept with the acknowledgement
  --help         this text

Exit status: 0 on success, 2 for a bad option, 1 when nothing could be acknowledged.
)";

}  // namespace

int CommandAck(const Arguments& args) {
  std::string db, point, band, by, note;
  for (std::size_t i = 0; i < args.size(); ++i) {
    const std::string& a = args[i];
    if (a == "--help" || a == "-h") {
      std::fputs(kUsage.data(), stdout);
      return 0;
    }
    if (!a.starts_with("--")) {
      if (!point.empty()) {
        std::fprintf(stderr, "spinward ack: one POINT only, got '%s' and '%s'\n", point.c_str(),
                     a.c_str());
        return 2;
      }
      point = a;
      continue;
    }
    std::string* target = a == "--db"     ? &db
                          : a == "--band" ? &band
                          : a == "--by"   ? &by
                          : a == "--note" ? &note
                                          : nullptr;
    if (target == nullptr) {
      std::fprintf(stderr, "spinward ack: unknown option '%s' (spinward ack --help)\n", a.c_str());
      return 2;
    }
    if (i + 1 >= args.size()) {
      std::fprintf(stderr, "spinward ack: option %s needs a value\n", a.c_str());
      return 2;
    }
    *target = args[++i];
  }
  if (point.empty() || db.empty()) {
    std::fprintf(stderr, "spinward ack: POINT and --db are required (spinward ack --help)\n");
    return 2;
  }
  if (by.empty()) {
    const char* user = std::getenv("USER");
    if (user == nullptr || *user == '\0') {
      std::fprintf(stderr, "spinward ack: --by is required (USER is not set)\n");
      return 2;
    }
    by = user;
  }
  auto store = storage::TrendStore::Open(db);
  if (!store) {
    std::fprintf(stderr, "spinward ack: %s\n", store.message().c_str());
    return 1;
  }
  auto acknowledged = store->Acknowledge(point, band, by, note, storage::WallClockNowNs());
  if (!acknowledged) {
    std::fprintf(stderr, "spinward ack: %s\n", acknowledged.message().c_str());
    return 1;
  }
  std::printf("acknowledged %d alarm state%s of %s as %s\n", *acknowledged,
              *acknowledged == 1 ? "" : "s", point.c_str(), by.c_str());
  return 0;
}

}  // namespace spinward::daemon
