// Query reports are read back by Python's csv and json modules (Debian's /usr/bin/python3): an
// outside reader of RFC 4180 CSV and RFC 8259 JSON, so quoting and escaping are checked by
// something other than this code.
#include "spinward/storage/query_report.h"

#include <gtest/gtest.h>

#include <fstream>

#include "storage/larkfield_records.h"
#include "support/test_paths.h"

namespace spinward::storage {
namespace {

// Writes `text` to a file and runs a Python snippet on it (the file's path is sys.argv[1]).
std::string RunPython(const std::string& name, const std::string& text, const std::string& code) {
  auto dir = spinward::testing::FreshTempDir(name);
  {
    std::ofstream(dir / "input.txt", std::ios::binary) << text;
    std::ofstream(dir / "read.py") << "import csv, json, sys\n" << code;
  }
  auto result = spinward::testing::RunCommand(spinward::testing::ReferencePython() + " " +
                                              (dir / "read.py").string() + " " +
                                              (dir / "input.txt").string());
  EXPECT_EQ(result.exit_code, 0) << result.error_output;
  return result.output;
}

std::vector<AlarmEventRecord> Events() {
  AlarmEventRecord e;
  e.event_id = "lf-1";
  e.time_ns = testing::kBaseNs;
  e.point_id = "P-101";
  e.measure = "velocity_rms_10_1000";
  e.from_state = "normal";
  e.to_state = "alert";
  e.value = 2.71;
  e.limit = 2.7;
  e.message = "P-101 \"drive end\", above alert\nsee log\\A";
  AlarmEventRecord f = e;
  f.event_id = "lf-2";
  f.limit.reset();
  return {e, f};
}

TEST(QueryReport, AlarmsCsvSurvivesQuotingAsPythonReadsIt) {
  std::string csv = RenderAlarms(Events(), ReportFormat::kCsv);
  std::string out = RunPython("report-csv", csv,
                              "rows = list(csv.DictReader(open(sys.argv[1], newline='')))\n"
                              "print(len(rows), rows[0]['time_utc'], repr(rows[0]['message']), "
                              "rows[0]['limit'], repr(rows[1]['limit']))\n");
  EXPECT_EQ(out,
            "2 2026-03-02T10:00:00Z 'P-101 \"drive end\", above alert\\nsee log\\\\A' 2.7 ''\n");
}

TEST(QueryReport, AlarmsJsonParsesWithPython) {
  std::string json = RenderAlarms(Events(), ReportFormat::kJson);
  std::string out =
      RunPython("report-json", json,
                "d = json.load(open(sys.argv[1]))['events']\n"
                "print(len(d), d[0]['time'], d[0]['message'] == 'P-101 \"drive end\", "
                "above alert\\nsee log\\\\A', d[0]['limit'], d[1]['limit'], d[0]['value'])\n");
  EXPECT_EQ(out, "2 2026-03-02T10:00:00Z True 2.7 None 2.71\n");
}

TEST(QueryReport, TrendAndStatusJsonParseWithPython) {
  TrendQuery query{"P-101", "velocity_rms_10_1000"};
  query.level = TrendLevel::kHourly;
  std::vector<TrendRow> rows = {
      {testing::kBaseNs, testing::kBaseNs + 3600LL * 1000000000LL, 2.414, 2.31, 2.52, 5, 1}};
  std::string trend = RenderTrend(query, "mm/s", rows, ReportFormat::kJson);
  EXPECT_EQ(RunPython("trend-json", trend,
                      "d = json.load(open(sys.argv[1]))\n"
                      "r = d['rows'][0]\n"
                      "print(d['level'], d['unit'], r['start'], r['end'], r['value'], r['count'], "
                      "r['sensor_fault_count'])\n"),
            "hourly mm/s 2026-03-02T10:00:00Z 2026-03-02T11:00:00Z 2.414 5 1\n");

  MeasureStatus with_alarm{"P-101", "velocity_rms_10_1000", "mm/s", 2.66, testing::kBaseNs, false,
                           {}};
  with_alarm.alarm = AlarmStateRecord{};
  with_alarm.alarm->state = "alert";
  with_alarm.alarm->latched = true;
  MeasureStatus no_value{"F-201", "overall_rms", "m/s^2", std::nullopt, 0, false, std::nullopt};
  std::string status = RenderStatus({no_value, with_alarm}, ReportFormat::kJson);
  EXPECT_EQ(RunPython("status-json", status,
                      "m = json.load(open(sys.argv[1]))['measures']\n"
                      "print(m[0]['latest_value'], m[0]['alarm'], m[1]['latest_value'], "
                      "m[1]['alarm']['state'], m[1]['alarm']['latched'])\n"),
            "None None 2.66 alert True\n");
}

TEST(QueryReport, FormatNamesAreChecked) {
  EXPECT_TRUE(ParseReportFormat("csv").ok());
  auto bad = ParseReportFormat("xml");
  ASSERT_FALSE(bad.ok());
  EXPECT_NE(bad.message().find("'xml'"), std::string::npos);
}

}  // namespace
}  // namespace spinward::storage
