// `spinward report`: the nightly review as one self-contained HTML page, CSV tables or a short
// text summary. Reads through its own read-only connection (it runs while the daemon writes); the
// site file, when given, adds what the database does not hold: machines, speeds and limits.
#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <limits>
#include <set>

#include "commands.h"
#include "option_reader.h"
#include "report_baseline.h"
#include "report_html.h"
#include "report_learned_baseline.h"
#include "report_model.h"
#include "report_text.h"
#include "site_judgement.h"
#include "spinward/config/site_loader.h"
#include "spinward/storage/report_reader.h"
#include "spinward/storage/time_text.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;

constexpr const char* kReportHelp =
    "usage: spinward report --db FILE [--since 24h | --from T --to T] [options]\n"
    "\n"
    "Writes the nightly review of a trend database: points by state, alarms raised, cleared and\n"
    "acknowledged, sensor faults and data completeness; points ranked by how far their bands "
    "moved\n"
    "against their baseline and the 7 days before, with a time-to-limit forecast (Theil-Sen);\n"
    "and for the points that matter, trend and spectrum charts. Advisory only: site maintenance\n"
    "rules and licensed practice prevail. The method is in docs/report.md.\n"
    "\n"
    "options:\n"
    "  --db FILE             the trend database (required)\n"
    "  --since T             the period: from T to now (default 24h; 7d, 2w, or ISO 8601 UTC)\n"
    "  --from T --to T       the period between two times (ISO 8601 UTC or relative)\n"
    "  --config FILE         the site file: machines, speeds (shaft harmonics) and limits\n"
    "  --machine M           only the points of machine M (needs --config)\n"
    "  --point P             always show point P in detail (repeatable)\n"
    "  --format F            html (default), csv or text\n"
    "  --out PATH            html: the file to write (required); csv: a directory for\n"
    "                        ranking.csv, measures.csv, alarms.csv and acknowledgements.csv;\n"
    "                        text: a file (default: standard output)\n"
    "  --fit-window D        forecast fit over the last D (default 7d)\n"
    "  --current-window D    'now' is the median of the hourly means of the last D (default 4h)\n"
    "  --horizon D           crossings later than D after the period's end don't count (90d)\n"
    "  --top N               ranked points shown in detail besides alarmed ones (default 10)\n"
    "\n"
    "Exit status: 0 written, 2 bad option, 1 the database or site file cannot be read.\n";

int Fail(const std::string& message, int code) {
  std::fprintf(stderr, "spinward report: %s\n", message.c_str());
  return code;
}

// "7d" -> 7 days in ns; only relative forms are durations.
Result<std::int64_t> ParseDuration(const std::string& option, const std::string& text) {
  auto t = storage::ParseTimeArgument(text, 0);
  if (!t || *t >= 0 || text.find_first_of("-:T") != std::string::npos) {
    return Error{option + " '" + text + "': not a duration (e.g. 4h, 7d, 2w)"};
  }
  return -*t;
}

Result<SiteFacts> FactsFromSite(const std::string& path) {
  config::LoadedSite loaded = config::LoadSiteFile(path);
  if (!loaded.ok()) {
    return Error{"site file: " + loaded.problems.front().ToString() +
                 (loaded.problems.size() > 1
                      ? " (and " + std::to_string(loaded.problems.size() - 1) + " more)"
                      : "")};
  }
  SiteFacts facts;
  for (const auto& p : loaded.site.points) {
    facts.machine_of_point[p.id] = p.machine;
    const config::MachineConfig* machine = loaded.site.FindMachine(p.machine);
    if (machine == nullptr || machine->speed_rpm <= 0) continue;
    facts.speed_rpm_of_point[p.id] = machine->speed_rpm;
    // Defect frequencies at the nominal speed: where to look in the spectrum, not a measurement.
    if (const auto& bearing = machine->diagnostics.bearing) {
      const double shaft_hz = machine->speed_rpm / 60.0;
      facts.defect_lines_of_point[p.id] = {{"FTF", bearing->ftf * shaft_hz},
                                           {"BPFO", bearing->bpfo * shaft_hz},
                                           {"BPFI", bearing->bpfi * shaft_hz},
                                           {"BSF", bearing->bsf * shaft_hz}};
    }
  }
  auto judgements = JudgementsFromSite(loaded.site);
  if (!judgements) return Error{"site file: " + judgements.message()};
  for (const auto& j : *judgements) {
    for (const auto& rule : j.rules) {
      facts.limits[{j.point_id, rule.measure}] =
          MeasureLimits{rule.high_alert, rule.high_danger, "site file"};
    }
  }
  return facts;
}

bool WriteFile(const fs::path& path, const std::string& text, std::string& error) {
  const fs::path tmp = path.string() + ".partial";
  {
    std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
    out << text;
    out.flush();
    if (!out) {
      error = "cannot write '" + tmp.string() + "'";
      return false;
    }
  }
  std::error_code ec;
  fs::rename(tmp, path, ec);  // readers never see half a report
  if (ec) {
    error = "cannot write '" + path.string() + "': " + ec.message();
    return false;
  }
  return true;
}

}  // namespace

int CommandReport(const Arguments& args) {
  auto opt = OptionReader::Parse(
      args,
      {"--db", "--since", "--from", "--to", "--config", "--machine", "--point", "--format", "--out",
       "--fit-window", "--current-window", "--horizon", "--top"},
      {"--help"});
  if (!opt) return Fail(opt.message(), 2);
  if (opt->Has("--help")) {
    std::fputs(kReportHelp, stdout);
    return 0;
  }
  if (!opt->positional().empty()) {
    return Fail("unexpected argument '" + opt->positional().front() + "'", 2);
  }
  const auto db = opt->Value("--db");
  if (!db) return Fail("--db is required (spinward report --help)", 2);
  const std::string format = opt->Value("--format").value_or("html");
  if (format != "html" && format != "csv" && format != "text") {
    return Fail("--format '" + format + "': must be html, csv or text", 2);
  }
  const auto out = opt->Value("--out");
  if (!out && format != "text") return Fail("--out is required for --format " + format, 2);
  if (opt->Has("--since") && (opt->Has("--from") || opt->Has("--to"))) {
    return Fail("give either --since or --from/--to, not both", 2);
  }
  if (opt->Has("--machine") && !opt->Has("--config")) {
    return Fail("--machine needs --config (the site file says which points a machine has)", 2);
  }

  const std::int64_t now = storage::WallClockNowNs();
  ReportOptions options;
  auto from = storage::ParseTimeArgument(
      opt->Value("--from").value_or(opt->Value("--since").value_or("24h")), now);
  if (!from) return Fail((opt->Has("--from") ? "--from: " : "--since: ") + from.message(), 2);
  auto to = storage::ParseTimeArgument(opt->Value("--to").value_or("now"), now);
  if (!to) return Fail("--to: " + to.message(), 2);
  options.from_ns = *from;
  options.to_ns = *to;
  options.machine = opt->Value("--machine").value_or("");
  options.points = opt->Values("--point");
  for (auto [name, target] : {std::pair{"--fit-window", &options.fit_window_ns},
                              std::pair{"--current-window", &options.current_window_ns},
                              std::pair{"--horizon", &options.horizon_ns}}) {
    if (auto text = opt->Value(name)) {
      auto d = ParseDuration(name, *text);
      if (!d) return Fail(d.message(), 2);
      *target = *d;
    }
  }
  auto top = opt->Integer("--top", 10, 0, 10000);
  if (!top) return Fail(top.message(), 2);
  options.top_points = static_cast<int>(*top);
  if (Status s = options.Validate(); !s.ok()) return Fail(s.message(), 2);

  SiteFacts facts;
  if (auto config = opt->Value("--config")) {
    auto loaded = FactsFromSite(*config);
    if (!loaded) return Fail(loaded.message(), 1);
    facts = std::move(*loaded);
    if (!options.machine.empty()) {
      bool known = false;
      for (const auto& [point, machine] : facts.machine_of_point)
        known |= machine == options.machine;
      if (!known) return Fail("--machine '" + options.machine + "': no point of the site file", 2);
    }
  }

  auto reader = storage::ReportReader::Open(*db);
  if (!reader) return Fail(reader.message(), 1);
  // Learned baselines (`spinward baseline`) where there are any, the first day of data elsewhere.
  auto learned = reader->LearnedBaselines();
  if (!learned) return Fail(learned.message(), 1);
  CommissioningBaseline commissioning;
  LearnedBaselineProvider baseline(*learned, commissioning);
  auto model = BuildReport(*reader, baseline, facts, options);
  if (!model) return Fail(model.message(), 1);

  std::string error;
  if (format == "html") {
    if (!WriteFile(*out, RenderReportHtml(*model, now), error)) return Fail(error, 1);
    std::printf("report written to %s (%zu points, %zu in detail)\n", out->c_str(),
                model->points.size(),
                static_cast<std::size_t>(
                    std::count_if(model->points.begin(), model->points.end(),
                                  [](const PointReview& p) { return !p.why_detailed.empty(); })));
  } else if (format == "csv") {
    std::error_code ec;
    fs::create_directories(*out, ec);
    if (ec) return Fail("cannot create '" + *out + "': " + ec.message(), 1);
    for (const auto& [name, text] : RenderReportCsv(*model)) {
      if (!WriteFile(fs::path(*out) / name, text, error)) return Fail(error, 1);
    }
    std::printf("tables written to %s\n", out->c_str());
  } else {
    const std::string text = RenderReportText(*model);
    if (out) {
      if (!WriteFile(*out, text, error)) return Fail(error, 1);
    } else {
      std::fputs(text.c_str(), stdout);
    }
  }
  return 0;
}

}  // namespace spinward::daemon
