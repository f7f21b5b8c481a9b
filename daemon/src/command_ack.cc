// `spinward ack POINT --db FILE [--band B] [--by WHO] [--note TEXT]`: acknowledges a point's
// active or latched alarms in the database. A running daemon picks the acknowledgement up from
// the acknowledgements table; the database's busy timeout covers the daemon's short write locks.
#include <cstdio>
#include <cstdlib>
#include <string>
#include <string_view>

#include "commands.h"
#include "option_reader.h"
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
  auto options = OptionReader::Parse(args, {"--db", "--band", "--by", "--note"}, {"--help"});
  if (!options.ok()) {
    std::fprintf(stderr, "spinward ack: %s\n", options.message().c_str());
    return 2;
  }
  if (options->Has("--help")) {
    std::fputs(kUsage.data(), stdout);
    return 0;
  }
  const auto& positional = options->positional();
  if (positional.size() > 1) {
    std::fprintf(stderr, "spinward ack: one POINT only, got '%s' and '%s'\n", positional[0].c_str(),
                 positional[1].c_str());
    return 2;
  }
  if (positional.empty() || !options->Value("--db")) {
    std::fprintf(stderr, "spinward ack: POINT and --db are required (spinward ack --help)\n");
    return 2;
  }
  const std::string point = positional.front(), db = *options->Value("--db");
  const std::string band = options->Value("--band").value_or("");
  const std::string note = options->Value("--note").value_or("");
  std::string by = options->Value("--by").value_or("");
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
