// `spinward report` on the demo's database (pump P-101's drive-end bearing worsening through alert
// to danger), in HTML, CSV and text, and the HTML opened by a real browser (Debian's chromium,
// headless, fresh profile, every request sent to a local proxy that must see none).
#include <arpa/inet.h>
#include <gtest/gtest.h>
#include <netinet/in.h>
#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <atomic>
#include <filesystem>
#include <fstream>
#include <map>
#include <mutex>
#include <regex>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include "spinward/storage/report_reader.h"
#include "spinward/storage/time_text.h"
#include "support/test_paths.h"

namespace spinward::daemon {
namespace {

namespace fs = std::filesystem;
using spinward::testing::CommandResult;
using spinward::testing::FreshTempDir;
using spinward::testing::ReferencePython;
using spinward::testing::RunCommand;
using spinward::testing::SpinwardBinary;

std::string ReadText(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

std::vector<std::string> SplitCsv(const std::string& line) {
  std::vector<std::string> out;
  std::string field;
  std::istringstream in(line);
  while (std::getline(in, field, ',')) {
    if (!field.empty() && field.back() == '\r') field.pop_back();
    out.push_back(field);
  }
  if (!line.empty() && (line.back() == ',' || line.ends_with(",\r"))) out.emplace_back();
  return out;
}

// Rows of a CSV file (no quoted fields in the ones read here) as header -> value maps.
std::vector<std::map<std::string, std::string>> ReadCsv(const fs::path& path) {
  std::istringstream in(ReadText(path));
  std::string line;
  std::getline(in, line);
  const auto header = SplitCsv(line);
  std::vector<std::map<std::string, std::string>> rows;
  while (std::getline(in, line)) {
    if (line.empty() || line == "\r") continue;
    const auto fields = SplitCsv(line);
    std::map<std::string, std::string> row;
    for (std::size_t i = 0; i < header.size() && i < fields.size(); ++i) row[header[i]] = fields[i];
    rows.push_back(row);
  }
  return rows;
}

std::int64_t ParseTime(const std::string& text) {
  auto t = storage::ParseTimeArgument(text, 0);
  EXPECT_TRUE(t.ok()) << text << ": " << t.message();
  return t.ok() ? *t : 0;
}

// One demo day shared by the tests of this file (it takes a while to send).
class ReportOnDemo : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(FreshTempDir("report_demo"));
    const CommandResult demo = RunCommand(SpinwardBinary().string() + " demo --hours 24 --dir " +
                                          dir_->string() + " --close-up-seconds 1");
    ASSERT_EQ(demo.exit_code, 0) << demo.error_output << demo.output;
    // The demo's day: its first stored hour, and 24 hours from there.
    auto reader = storage::ReportReader::Open(Db().string());
    ASSERT_TRUE(reader.ok()) << reader.message();
    auto measures = reader->Measures();
    ASSERT_TRUE(measures.ok() && !measures->empty()) << measures.message();
    auto first = reader->FirstHour(measures->front().measure_pk);
    ASSERT_TRUE(first.ok() && first->has_value()) << first.message();
    day_start_ = **first;
  }
  // --from and --to of the demo's whole day.
  static std::string Day() {
    return "--from " + storage::FormatIsoUtc(day_start_) + " --to " +
           storage::FormatIsoUtc(day_start_ + 24 * 3600LL * 1'000'000'000LL);
  }
  static void TearDownTestSuite() {
    delete dir_;
    dir_ = nullptr;
  }
  static fs::path Db() { return *dir_ / "larkfield.sqlite"; }
  static fs::path Site() { return *dir_ / "larkfield-site.yaml"; }
  static std::string Report(const std::string& options) {
    return SpinwardBinary().string() + " report --db " + Db().string() + " --config " +
           Site().string() + " " + options;
  }
  // First alarm event of P101-DE-H's `measure` into `state`, from `spinward alarms`.
  static std::int64_t FirstEvent(const std::string& measure, const std::string& state) {
    const CommandResult alarms = RunCommand(
        SpinwardBinary().string() + " alarms --format csv --since 30d --db " + Db().string());
    EXPECT_EQ(alarms.exit_code, 0) << alarms.error_output;
    std::istringstream in(alarms.output);
    std::string line;
    std::getline(in, line);
    const auto header = SplitCsv(line);
    while (std::getline(in, line)) {
      const auto f = SplitCsv(line);
      std::map<std::string, std::string> row;
      for (std::size_t i = 0; i < header.size() && i < f.size(); ++i) row[header[i]] = f[i];
      if (row["point"] == "P101-DE-H" && row["measure"] == measure && row["to_state"] == state) {
        return ParseTime(row["time_utc"]);
      }
    }
    ADD_FAILURE() << "no " << state << " event of P101-DE-H " << measure << "\n" << alarms.output;
    return 0;
  }
  static fs::path* dir_;
  static std::int64_t day_start_;
};
fs::path* ReportOnDemo::dir_ = nullptr;
std::int64_t ReportOnDemo::day_start_ = 0;

TEST_F(ReportOnDemo, RanksTheDegradingPumpFirst) {
  const fs::path out = *dir_ / "tables";
  const CommandResult r = RunCommand(Report(Day() + " --format csv --out " + out.string()));
  ASSERT_EQ(r.exit_code, 0) << r.error_output;
  const auto ranking = ReadCsv(out / "ranking.csv");
  ASSERT_EQ(ranking.size(), 8u);  // the demo site's eight points
  // The scenario (daemon/src/demo_scenario.cc) worsens P101-DE-H most: its bearing impacts grow
  // about 36-fold and its 1x line fourfold over the day; the other P-101 points see 0.55 of that,
  // P-102 and the fan stay as they were.
  EXPECT_EQ(ranking[0].at("point"), "P101-DE-H");
  EXPECT_EQ(ranking[0].at("state"), "danger");
  for (std::size_t i = 1; i < 3; ++i) EXPECT_EQ(ranking[i].at("point").rfind("P101", 0), 0u);
  for (std::size_t i = 3; i < 8; ++i) EXPECT_NE(ranking[i].at("point").rfind("P101", 0), 0u);
  // The other P-101 points rank next, P-102 and the fan last.
  // Healthy points moved little (scatter only); the failing one by more than 6 dB (doubling).
  EXPECT_GT(std::stod(ranking[0].at("score_db")), 6.0);
  EXPECT_LT(std::stod(ranking[7].at("score_db")), 3.0);
  // Each point sent 3 one-second intervals every hour for 24 hours (demo_command_test.cc), and
  // all of them arrived: 72 of 72.
  for (const auto& row : ranking) {
    EXPECT_EQ(row.at("received"), "72") << row.at("point");
    EXPECT_EQ(row.at("expected"), "72") << row.at("point");
  }
  const auto alarms = ReadCsv(out / "alarms.csv");
  EXPECT_FALSE(alarms.empty());
  for (const auto& e : alarms) EXPECT_EQ(e.at("point").rfind("P101", 0), 0u) << e.at("point");

  const CommandResult text = RunCommand(Report(Day() + " --format text"));
  ASSERT_EQ(text.exit_code, 0) << text.error_output;
  EXPECT_NE(text.output.find(" 1. P101-DE-H"), std::string::npos) << text.output;
  EXPECT_NE(text.output.find("licensed practice"), std::string::npos) << text.output;
}

TEST_F(ReportOnDemo, ForecastBracketsTheDangerCrossing) {
  // The reports as they would have been written when the velocity band went into alert and in
  // the two hours after: the Theil-Sen line through the last hours of hourly means, projected to
  // danger (ISO 10816-3 group 2 rigid C/D, 4.5 mm/s), must bracket when the scenario got there.
  // The demo packs months of wear into a day, so the fit window is packed likewise: 6 h.
  // The scenario is seen hourly: it crosses somewhere between the last snapshot below danger (an
  // hour before the danger event) and the event itself.
  const std::int64_t hour = 3600LL * 1'000'000'000LL;
  const std::int64_t alert = FirstEvent("velocity", "alert");
  const std::int64_t danger = FirstEvent("velocity", "danger");
  ASSERT_LT(alert, danger - 3 * hour);
  for (int after = 0; after <= 2; ++after) {
    SCOPED_TRACE("report written " + std::to_string(after) + " h after the alert");
    const std::int64_t to = alert + after * hour;
    const fs::path out = *dir_ / ("at_alert_plus_" + std::to_string(after));
    const CommandResult r = RunCommand(
        Report("--from " + storage::FormatIsoUtc(to - 24 * hour) + " --to " +
               storage::FormatIsoUtc(to) + " --fit-window 6h --format csv --out " + out.string()));
    ASSERT_EQ(r.exit_code, 0) << r.error_output;
    bool found = false;
    for (const auto& m : ReadCsv(out / "measures.csv")) {
      if (m.at("point") != "P101-DE-H" || m.at("measure") != "velocity") continue;
      found = true;
      EXPECT_EQ(m.at("danger_limit"), "4.5");
      ASSERT_EQ(m.at("danger_kind"), "heading");
      ASSERT_FALSE(m.at("danger_latest").empty()) << "the range must be bounded";
      const std::int64_t earliest = ParseTime(m.at("danger_earliest"));
      const std::int64_t likely = ParseTime(m.at("danger_likely"));
      const std::int64_t latest = ParseTime(m.at("danger_latest"));
      const std::string event = storage::FormatIsoUtc(danger);
      EXPECT_LE(earliest, danger) << m.at("danger_earliest") << " vs event " << event;
      EXPECT_GE(latest, danger - hour) << m.at("danger_latest") << " vs event " << event;
      EXPECT_LE(earliest, likely);
      EXPECT_LE(likely, latest);
      // Seven hours ahead or less, the likely date is within the hour of the event.
      EXPECT_LE(std::llabs(likely - danger), hour) << m.at("danger_likely") << " vs " << event;
    }
    EXPECT_TRUE(found);
  }
}

constexpr const char* kNoRequestLine = "(no request line)";

// A TCP listener on an OS-chosen loopback port that keeps the first line of each request sent to
// it: the proxy every browser request goes to.
class RequestRecorder {
 public:
  RequestRecorder() {
    fd_ = ::socket(AF_INET, SOCK_STREAM, 0);
    sockaddr_in addr{};
    addr.sin_family = AF_INET;
    addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    addr.sin_port = 0;
    ::bind(fd_, reinterpret_cast<sockaddr*>(&addr), sizeof addr);
    ::listen(fd_, 16);
    socklen_t len = sizeof addr;
    ::getsockname(fd_, reinterpret_cast<sockaddr*>(&addr), &len);
    port_ = ntohs(addr.sin_port);
    thread_ = std::thread([this] {
      while (!stop_) {
        pollfd p{fd_, POLLIN, 0};
        if (::poll(&p, 1, 100) <= 0) continue;
        const int c = ::accept(fd_, nullptr, nullptr);
        if (c < 0) continue;
        std::string line = kNoRequestLine;
        pollfd q{c, POLLIN, 0};
        char buf[2048];
        if (::poll(&q, 1, 2000) > 0) {
          const ssize_t n = ::recv(c, buf, sizeof buf, 0);
          if (n > 0) line.assign(buf, static_cast<std::size_t>(n));
          line = line.substr(0, line.find('\r'));
        }
        ::close(c);
        std::lock_guard lock(mutex_);
        lines_.push_back(line);
      }
    });
  }
  ~RequestRecorder() {
    stop_ = true;
    thread_.join();
    ::close(fd_);
  }
  int port() const { return port_; }
  std::vector<std::string> lines() const {
    std::lock_guard lock(mutex_);
    return lines_;
  }

 private:
  int fd_ = -1;
  int port_ = 0;
  std::atomic<bool> stop_{false};
  mutable std::mutex mutex_;
  std::vector<std::string> lines_;
  std::thread thread_;
};

// Chromium calls its maker's services by itself (component updates, account and time checks),
// even on about:blank and with every switch that turns such traffic down: those requests are the
// browser's, not the page's. The page names no host at all (checked above), so any other request
// would be the report reaching out.
// A connection that closed without sending a request line (the browser opens spare proxy
// connections ahead of need and drops them when it exits) fetched nothing, so it is not counted.
bool BrowserOwnRequest(const std::string& line) {
  if (line == kNoRequestLine) return true;
  static const std::regex own(
      R"(^(CONNECT [a-z0-9.-]+\.(google\.com|googleapis\.com):443 |(GET|POST) https?://[a-z0-9.-]+\.(google\.com|googleapis\.com)/))");
  return std::regex_search(line, own);
}

int Count(const std::string& text, const std::string& what) {
  int n = 0;
  for (auto at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
  return n;
}

TEST_F(ReportOnDemo, ChromiumShowsEverySectionAndFetchesNothing) {
  const fs::path chromium = "/usr/bin/chromium";
  if (!fs::exists(chromium)) {
    GTEST_SKIP() << "Debian's chromium is not installed (/usr/bin/chromium missing); "
                    "deploy/setup.sh installs it";
  }
  const fs::path html = *dir_ / "review.html";
  const CommandResult r = RunCommand(Report(Day() + " --out " + html.string()));
  ASSERT_EQ(r.exit_code, 0) << r.error_output;
  const std::string page = ReadText(html);
  // Self-contained: no URL anywhere, no src attribute, links only to the page's own anchors.
  EXPECT_EQ(page.find("http:"), std::string::npos);
  EXPECT_EQ(page.find("https:"), std::string::npos);
  EXPECT_EQ(page.find("src="), std::string::npos);
  EXPECT_FALSE(std::regex_search(page, std::regex("href=\"[^#]")));
  EXPECT_EQ(page.find("google"), std::string::npos);

  RequestRecorder proxy;
  const fs::path profile = FreshTempDir("report_chromium_profile");
  // Every request (loopback included: "<-loopback>") goes to the counting proxy; background
  // services that would call home on their own are switched off, so any connection is the page's.
  auto browser_via = [&](int proxy_port) {
    return chromium.string() + " --headless --no-sandbox --disable-gpu --no-first-run" +
           " --disable-background-networking --disable-component-update --disable-sync" +
           " --disable-default-apps --no-default-browser-check --disable-breakpad" +
           " --disable-extensions --disable-client-side-phishing-detection --no-pings" +
           " --user-data-dir=" + profile.string() +
           " --proxy-server=http://127.0.0.1:" + std::to_string(proxy_port) +
           " --proxy-bypass-list='<-loopback>'" +
           " --window-size=1200,1600 --virtual-time-budget=3000";
  };
  const std::string browser = browser_via(proxy.port());
  const CommandResult dom = RunCommand(browser + " --dump-dom file://" + html.string());
  ASSERT_EQ(dom.exit_code, 0) << dom.error_output;
  for (const char* id : {"caution", "summary", "changes", "alarms", "points", "method"}) {
    EXPECT_NE(dom.output.find(std::string("id=\"") + id + "\""), std::string::npos) << id;
  }
  EXPECT_NE(dom.output.find("licensed practice"), std::string::npos);
  // A chart for every point shown in detail: its trend charts and its spectrum chart.
  std::smatch match;
  std::string rest = dom.output;
  const std::regex article("<article class=\"point\" id=\"[^\"]*\" data-point=\"([^\"]*)\"");
  int articles = 0;
  while (std::regex_search(rest, match, article)) {
    const std::string point = match[1];
    ++articles;
    EXPECT_GE(Count(dom.output, "trend-chart\" data-point=\"" + point + "\""), 2) << point;
    EXPECT_EQ(Count(dom.output, "spectrum-chart\" data-point=\"" + point + "\""), 1) << point;
    rest = match.suffix();
  }
  EXPECT_GE(articles, 3);  // at least P-101's three points, all in alarm
  EXPECT_NE(dom.output.find("data-point=\"P101-DE-H\""), std::string::npos);

  const fs::path shot = *dir_ / "review.png";
  const CommandResult screenshot =
      RunCommand(browser + " --screenshot=" + shot.string() + " file://" + html.string());
  ASSERT_EQ(screenshot.exit_code, 0) << screenshot.error_output;
  ASSERT_TRUE(fs::exists(shot));
  const CommandResult pixels =
      RunCommand(ReferencePython() + " " +
                 (spinward::testing::SourceDir() / "tests/reference/png_stats.py").string() + " " +
                 shot.string());
  ASSERT_EQ(pixels.exit_code, 0) << pixels.error_output;
  std::istringstream in(pixels.output);
  int width = 0, height = 0, colours = 0;
  double ink = 0;
  in >> width >> height >> colours >> ink;
  EXPECT_EQ(width, 1200);
  EXPECT_EQ(height, 1600);
  // A blank page is one colour; the report's banner, tables and text give many colours and
  // cover a good share of the page (common practice, no source: 5 % and 20 colours are low bars).
  EXPECT_GT(colours, 20) << pixels.output;
  EXPECT_GT(ink, 0.05) << pixels.output;
  // The control: a page that does fetch something is seen by the recorder, so the check above
  // could fail.
  const fs::path control = *dir_ / "control.html";
  std::ofstream(control) << "<!DOCTYPE html><img src=\"http://leak-check.invalid/pixel.png\">";
  RequestRecorder control_proxy;
  ASSERT_EQ(RunCommand(browser_via(control_proxy.port()) + " --dump-dom file://" + control.string())
                .exit_code,
            0);
  bool control_seen = false;
  for (const auto& line : control_proxy.lines()) {
    control_seen |= line.find("leak-check.invalid") != std::string::npos;
  }
  EXPECT_TRUE(control_seen) << "the recorder missed a page's request; the check is blind";

  std::string seen;
  int from_page = 0;
  for (const auto& line : proxy.lines()) {
    seen += line + "\n";
    if (!BrowserOwnRequest(line)) ++from_page;
  }
  EXPECT_EQ(from_page, 0) << "requests other than the browser's own:\n" << seen;
}

TEST_F(ReportOnDemo, SpectrumMarksBearingDefectFrequenciesOfAConfiguredBearing) {
  // The demo's site with a bearing on P-101 given by its four multiples: those of the deep-groove
  // 6205 in the Case Western Reserve University bearing data set (BPFI 5.4152, BPFO 3.5848, FTF
  // 0.39828, element spin 2.357 = half its published 2 x BSF 4.7135).
  std::ifstream in(Site());
  std::stringstream text;
  text << in.rdbuf();
  std::string site = text.str();
  const std::string p101 = "{id: P-101, name: Booster pump 1, kind: pump, speed_rpm: 1480";
  const auto at = site.find(p101);
  ASSERT_NE(at, std::string::npos) << site;
  site.insert(at + p101.size(),
              ", bearing: {ftf: 0.39828, bpfo: 3.5848, bpfi: 5.4152, bsf: 2.35675}");
  const fs::path with_bearing = *dir_ / "site-with-bearing.yaml";
  std::ofstream(with_bearing) << site;

  const fs::path out = *dir_ / "bearing.html";
  const CommandResult r =
      RunCommand(SpinwardBinary().string() + " report --db " + Db().string() + " --config " +
                 with_bearing.string() + " " + Day() + " --out " + out.string());
  ASSERT_EQ(r.exit_code, 0) << r.error_output << r.output;
  std::ifstream html_in(out);
  std::stringstream html;
  html << html_in.rdbuf();
  const std::string page = html.str();
  // BPFO at 1480 rpm: 3.5848 x 1480 / 60 = 88.43 Hz (by hand). Markers carry the line's name.
  // The spectrum view spans at least 5.5 x the highest line, so all four are drawn.
  for (const char* name : {"BPFO", "BPFI", "FTF", "BSF"}) {
    EXPECT_NE(page.find("<g class=\"mark defect\"><title>" + std::string(name) + "</title>"),
              std::string::npos)
        << name;
  }
  // Only P-101 has a bearing: a P-102 spectrum, if shown in detail, carries no defect mark.
  const auto p102 = page.find("data-point=\"P102");
  if (p102 != std::string::npos) {
    const auto end = page.find("</svg>", p102);
    EXPECT_EQ(page.substr(p102, end - p102).find("mark defect"), std::string::npos);
  }
}

TEST(Report, BadOptionsAreOneLine) {
  const CommandResult none = RunCommand(SpinwardBinary().string() + " report");
  EXPECT_EQ(none.exit_code, 2);
  EXPECT_EQ(none.error_output, "spinward report: --db is required (spinward report --help)\n");
  const CommandResult format =
      RunCommand(SpinwardBinary().string() + " report --db x.sqlite --format pdf --out x");
  EXPECT_EQ(format.exit_code, 2);
  EXPECT_EQ(format.error_output, "spinward report: --format 'pdf': must be html, csv or text\n");
  const CommandResult backwards =
      RunCommand(SpinwardBinary().string() +
                 " report --db x.sqlite --from 2026-03-02 --to 2026-03-01 --out x.html");
  EXPECT_EQ(backwards.exit_code, 2);
  EXPECT_EQ(backwards.error_output,
            "spinward report: to (--to) must be after from (--from): the period is empty\n");
  const CommandResult missing =
      RunCommand(SpinwardBinary().string() + " report --db /nonexistent/trend.sqlite --out x.html");
  EXPECT_EQ(missing.exit_code, 1);
  EXPECT_NE(missing.error_output.find("/nonexistent/trend.sqlite"), std::string::npos)
      << missing.error_output;
}

}  // namespace
}  // namespace spinward::daemon
