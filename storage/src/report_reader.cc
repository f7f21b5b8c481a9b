// Each query is one prepared statement keyed by an indexed column: rollup_hourly by (measure_pk,
// bucket_ns), alarm_events by time_ns, spectra by (point_pk, start_ns). Acknowledgements and alarm
// states are small tables (one row per person's ack, one per point and measure) read whole.
#include "spinward/storage/report_reader.h"

#include <cmath>
#include <utility>

#include "sqlite_db.h"
#include "trend_row_columns.h"

namespace spinward::storage {

using internal::Db;
using internal::Statement;

namespace {

struct NamedSql {
  const char* name;
  const char* sql;
};

constexpr NamedSql kMeasures{
    "measures",
    "SELECT m.measure_pk, p.point_id, m.name, m.kind, m.unit, m.lo_hz, m.hi_hz FROM measures m "
    "JOIN points p USING (point_pk) ORDER BY p.point_id, m.name"};
constexpr NamedSql kHourly{
    "hourly",
    "SELECT bucket_ns, bucket_ns + 3600000000000, CASE WHEN count > 0 THEN sum / count END, min, "
    "max, count, fault_count FROM rollup_hourly WHERE measure_pk = ?1 AND bucket_ns >= ?2 AND "
    "bucket_ns < ?3 ORDER BY bucket_ns"};
constexpr NamedSql kHourCentre{
    "hour_centre",
    "SELECT avg((start_ns - ?2) + (end_ns - start_ns) / 2.0) FROM trend_values WHERE measure_pk = "
    "?1 AND start_ns >= ?2 AND start_ns < ?2 + 3600000000000"};
constexpr NamedSql kFirstHour{"first_hour",
                              "SELECT min(bucket_ns) FROM rollup_hourly WHERE measure_pk = ?1"};
constexpr NamedSql kEvents{
    "events",
    "SELECT e.event_id, e.time_ns, p.point_id, e.measure, e.from_state, e.to_state, e.value, "
    "e.limit_value, e.message FROM alarm_events e JOIN points p USING (point_pk) "
    "WHERE e.time_ns >= ?1 AND e.time_ns < ?2 ORDER BY e.time_ns, e.event_pk"};
constexpr NamedSql kAcks{
    "acknowledgements",
    "SELECT k.ack_id, p.point_id, k.measure, k.ack_by, k.time_ns, k.note FROM acknowledgements k "
    "JOIN points p USING (point_pk) WHERE k.time_ns >= ?1 AND k.time_ns < ?2 ORDER BY k.time_ns"};
constexpr NamedSql kStates{
    "states",
    "SELECT p.point_id, a.measure, a.state, a.since_ns, a.latched, a.last_value, "
    "coalesce(a.last_event_id, ''), a.ack_by, a.ack_ns, a.ack_note, a.updated_ns FROM alarm_state "
    "a JOIN points p USING (point_pk) ORDER BY p.point_id, a.measure"};
constexpr NamedSql kSpectrumBefore{
    "spectrum_before",
    "SELECT s.start_ns, s.end_ns, s.data FROM spectra s WHERE s.point_pk = (SELECT point_pk FROM "
    "points WHERE point_id = ?1) AND s.start_ns < ?2 ORDER BY s.start_ns DESC LIMIT 1"};
constexpr NamedSql kFirstSpectrum{
    "first_spectrum",
    "SELECT s.start_ns, s.end_ns, s.data FROM spectra s WHERE s.point_pk = (SELECT point_pk FROM "
    "points WHERE point_id = ?1) ORDER BY s.start_ns LIMIT 1"};

constexpr NamedSql kLearnedBaselines{
    "learned_baselines",
    "SELECT point, measure, median, mad, count, start_ns, end_ns, learned_ns, alert, danger FROM "
    "baselines WHERE learned_ns IS NOT NULL AND median IS NOT NULL ORDER BY point, measure"};

constexpr NamedSql kAll[] = {
    kMeasures, kHourly, kHourCentre,     kFirstHour,     kEvents,
    kAcks,     kStates, kSpectrumBefore, kFirstSpectrum, kLearnedBaselines};

}  // namespace

struct ReportReader::Impl {
  Db db;
  std::string path;

  Result<Statement> Prepare(const NamedSql& q) {
    auto stmt = db.Prepare(q.sql);
    if (!stmt) return Error{"report query '" + std::string(q.name) + "': " + stmt.message()};
    return stmt;
  }
  Error Failed(const NamedSql& q) const {
    return Error{"report query '" + std::string(q.name) + "' on '" + path +
                 "': " + db.ErrorMessage()};
  }
  Result<std::optional<StoredSpectrum>> Spectrum(const NamedSql& q, const std::string& point_id,
                                                 std::optional<std::int64_t> before_ns) {
    auto stmt = Prepare(q);
    if (!stmt) return stmt.status();
    stmt->Bind(1, point_id);
    if (before_ns) stmt->Bind(2, *before_ns);
    const int rc = stmt->Step();
    if (rc == SQLITE_DONE) return std::optional<StoredSpectrum>();
    if (rc != SQLITE_ROW) return Failed(q);
    auto snapshot = DecodeSpectrumBlob(stmt->Blob(2));
    if (!snapshot) {
      return Error{"point '" + point_id + "' spectrum at " + std::to_string(stmt->Int(0)) + ": " +
                   snapshot.message()};
    }
    return std::optional<StoredSpectrum>(
        StoredSpectrum{point_id, stmt->Int(0), stmt->Int(1), std::move(*snapshot)});
  }
};

Result<ReportReader> ReportReader::Open(const std::string& path) {
  auto db = Db::Open(path, /*read_only=*/true, /*create=*/false);
  if (!db) return db.status();
  auto version = db->QueryInt("PRAGMA user_version");
  if (!version) return Error{"cannot read '" + path + "': " + version.message()};
  if (*version != kSchemaVersion) {
    return Error{"'" + path + "' has schema version " + std::to_string(*version) +
                 ", this build reads " + std::to_string(kSchemaVersion) +
                 " (start the daemon once on it to migrate)"};
  }
  auto impl = std::make_unique<Impl>();
  impl->db = std::move(*db);
  impl->path = path;
  if (Status s = impl->db.Exec("PRAGMA busy_timeout = 5000"); !s.ok()) return s;
  return ReportReader(std::move(impl));
}

ReportReader::ReportReader(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
ReportReader::ReportReader(ReportReader&&) noexcept = default;
ReportReader& ReportReader::operator=(ReportReader&&) noexcept = default;
ReportReader::~ReportReader() = default;

Result<std::vector<ReportMeasure>> ReportReader::Measures() {
  auto stmt = impl_->Prepare(kMeasures);
  if (!stmt) return stmt.status();
  std::vector<ReportMeasure> out;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    ReportMeasure m;
    m.measure_pk = stmt->Int(0);
    m.point_id = stmt->Text(1);
    m.name = stmt->Text(2);
    m.kind = stmt->Text(3);
    m.unit = stmt->Text(4);
    if (!stmt->IsNull(5)) m.lo_hz = stmt->Real(5);
    if (!stmt->IsNull(6)) m.hi_hz = stmt->Real(6);
    out.push_back(std::move(m));
  }
  if (rc != SQLITE_DONE) return impl_->Failed(kMeasures);
  return out;
}

Result<std::vector<TrendRow>> ReportReader::Hourly(std::int64_t measure_pk, std::int64_t since_ns,
                                                   std::int64_t until_ns) {
  auto stmt = impl_->Prepare(kHourly);
  if (!stmt) return stmt.status();
  stmt->Bind(1, measure_pk).Bind(2, since_ns).Bind(3, until_ns);
  std::vector<TrendRow> rows;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    rows.push_back(internal::TrendRowFromColumns(*stmt));
  }
  if (rc != SQLITE_DONE) return impl_->Failed(kHourly);
  return rows;
}

Result<std::optional<double>> ReportReader::HourCentre(std::int64_t measure_pk,
                                                       std::int64_t bucket_ns) {
  auto stmt = impl_->Prepare(kHourCentre);
  if (!stmt) return stmt.status();
  stmt->Bind(1, measure_pk).Bind(2, bucket_ns);
  if (stmt->Step() != SQLITE_ROW) return impl_->Failed(kHourCentre);
  if (stmt->IsNull(0)) return std::optional<double>();
  return std::optional<double>(stmt->Real(0));
}

Result<std::optional<std::int64_t>> ReportReader::FirstHour(std::int64_t measure_pk) {
  auto stmt = impl_->Prepare(kFirstHour);
  if (!stmt) return stmt.status();
  stmt->Bind(1, measure_pk);
  if (stmt->Step() != SQLITE_ROW) return impl_->Failed(kFirstHour);
  if (stmt->IsNull(0)) return std::optional<std::int64_t>();
  return std::optional<std::int64_t>(stmt->Int(0));
}

Result<std::vector<AlarmEventRecord>> ReportReader::Events(std::int64_t since_ns,
                                                           std::int64_t until_ns) {
  auto stmt = impl_->Prepare(kEvents);
  if (!stmt) return stmt.status();
  stmt->Bind(1, since_ns).Bind(2, until_ns);
  std::vector<AlarmEventRecord> out;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    AlarmEventRecord e;
    e.event_id = stmt->Text(0);
    e.time_ns = stmt->Int(1);
    e.point_id = stmt->Text(2);
    e.measure = stmt->Text(3);
    e.from_state = stmt->Text(4);
    e.to_state = stmt->Text(5);
    e.value = stmt->IsNull(6) ? std::nan("") : stmt->Real(6);
    if (!stmt->IsNull(7)) e.limit = stmt->Real(7);
    e.message = stmt->Text(8);
    out.push_back(std::move(e));
  }
  if (rc != SQLITE_DONE) return impl_->Failed(kEvents);
  return out;
}

Result<std::vector<AcknowledgementRecord>> ReportReader::Acknowledgements(std::int64_t since_ns,
                                                                          std::int64_t until_ns) {
  auto stmt = impl_->Prepare(kAcks);
  if (!stmt) return stmt.status();
  stmt->Bind(1, since_ns).Bind(2, until_ns);
  std::vector<AcknowledgementRecord> out;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    out.push_back(
        {stmt->Int(0), stmt->Text(1), stmt->Text(2), stmt->Text(3), stmt->Int(4), stmt->Text(5)});
  }
  if (rc != SQLITE_DONE) return impl_->Failed(kAcks);
  return out;
}

Result<std::vector<AlarmStateRecord>> ReportReader::States() {
  auto stmt = impl_->Prepare(kStates);
  if (!stmt) return stmt.status();
  std::vector<AlarmStateRecord> out;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    AlarmStateRecord a;
    a.point_id = stmt->Text(0);
    a.measure = stmt->Text(1);
    a.state = stmt->Text(2);
    a.since_ns = stmt->Int(3);
    a.latched = stmt->Int(4) != 0;
    a.last_value = stmt->IsNull(5) ? std::nan("") : stmt->Real(5);
    a.last_event_id = stmt->Text(6);
    a.ack_by = stmt->Text(7);
    a.ack_ns = stmt->Int(8);
    a.ack_note = stmt->Text(9);
    a.updated_ns = stmt->Int(10);
    out.push_back(std::move(a));
  }
  if (rc != SQLITE_DONE) return impl_->Failed(kStates);
  return out;
}

Result<std::optional<StoredSpectrum>> ReportReader::SpectrumBefore(const std::string& point_id,
                                                                   std::int64_t before_ns) {
  return impl_->Spectrum(kSpectrumBefore, point_id, before_ns);
}

Result<std::optional<StoredSpectrum>> ReportReader::FirstSpectrum(const std::string& point_id) {
  return impl_->Spectrum(kFirstSpectrum, point_id, std::nullopt);
}

Result<std::vector<BaselineRow>> ReportReader::LearnedBaselines() {
  auto stmt = impl_->Prepare(kLearnedBaselines);
  if (!stmt) return stmt.status();
  std::vector<BaselineRow> rows;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    BaselineRow b;
    b.point = stmt->Text(0);
    b.measure = stmt->Text(1);
    b.median = stmt->Real(2);
    if (!stmt->IsNull(3)) b.mad = stmt->Real(3);
    b.count = stmt->Int(4);
    b.start_ns = stmt->Int(5);
    b.end_ns = stmt->Int(6);
    b.learned_ns = stmt->Int(7);
    if (!stmt->IsNull(8)) b.alert = stmt->Real(8);
    if (!stmt->IsNull(9)) b.danger = stmt->Real(9);
    rows.push_back(std::move(b));
  }
  if (rc != SQLITE_DONE) return impl_->Failed(kLearnedBaselines);
  return rows;
}

Result<std::vector<std::string>> ReportReader::ExplainAll() {
  std::vector<std::string> lines;
  for (const NamedSql& q : kAll) {
    auto stmt = impl_->db.Prepare(std::string("EXPLAIN QUERY PLAN ") + q.sql);
    if (!stmt) return stmt.status();
    int rc = 0;
    while ((rc = stmt->Step()) == SQLITE_ROW)
      lines.push_back(std::string(q.name) + ": " + stmt->Text(3));
    if (rc != SQLITE_DONE) return impl_->Failed(q);
  }
  return lines;
}

}  // namespace spinward::storage
