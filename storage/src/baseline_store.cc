#include "spinward/storage/baseline_store.h"

#include <sqlite3.h>

#include <utility>

#include "spinward/storage/trend_store.h"
#include "sqlite_db.h"

namespace spinward::storage {

using internal::Db;

struct BaselineStore::Impl {
  std::string path;
  Db db;
};

Result<BaselineStore> BaselineStore::Open(const std::string& path) {
  {
    // Creates or migrates the file to the current schema (version 4 holds `baselines`).
    auto store = TrendStore::Open(path);
    if (!store) return store.status();
  }
  auto db = Db::Open(path, false, false);
  if (!db) return db.status();
  if (auto error = db->ExecCoded("PRAGMA busy_timeout = 5000")) {
    return Error{"opening '" + path + "': " + error->message};
  }
  auto impl = std::make_unique<Impl>();
  impl->path = path;
  impl->db = std::move(*db);
  return BaselineStore(std::move(impl));
}

BaselineStore::BaselineStore(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
BaselineStore::BaselineStore(BaselineStore&&) noexcept = default;
BaselineStore& BaselineStore::operator=(BaselineStore&&) noexcept = default;
BaselineStore::~BaselineStore() = default;

Result<int> BaselineStore::Start(const std::string& point, std::int64_t start_ns,
                                 std::int64_t end_ns) {
  if (end_ns <= start_ns) return Error{"the learning period must end after it starts"};
  Db& db = impl_->db;
  if (auto error = db.ExecCoded("BEGIN IMMEDIATE")) {
    return Error{"starting a baseline in '" + impl_->path + "': " + error->message};
  }
  auto insert = db.Prepare(
      "INSERT INTO baselines (point, measure, median, mad, count, start_ns, end_ns, learned_ns, "
      "alert, danger) SELECT p.point_id, m.name, NULL, NULL, 0, ?2, ?3, NULL, NULL, NULL "
      "FROM measures m JOIN points p ON p.point_pk = m.point_pk WHERE p.point_id = ?1 "
      "ON CONFLICT (point, measure) DO UPDATE SET median = NULL, mad = NULL, count = 0, "
      "start_ns = excluded.start_ns, end_ns = excluded.end_ns, learned_ns = NULL, alert = NULL, "
      "danger = NULL");
  if (!insert) {
    db.ExecCoded("ROLLBACK");
    return insert.status();
  }
  insert->Bind(1, point).Bind(2, start_ns).Bind(3, end_ns);
  if (insert->Step() != SQLITE_DONE) {
    std::string why = db.ErrorMessage();
    db.ExecCoded("ROLLBACK");
    return Error{"starting a baseline: " + why};
  }
  const int marked = static_cast<int>(db.Changes());
  if (marked == 0) {
    db.ExecCoded("ROLLBACK");
    return Error{"point '" + point +
                 "' has no stored measures yet; start the baseline once the daemon has stored its "
                 "first intervals"};
  }
  if (auto error = db.ExecCoded("COMMIT")) return Error{error->message};
  return marked;
}

Result<int> BaselineStore::Learn(const std::string& point, std::int64_t now_ns,
                                 const estimators::LimitRule& rule) {
  auto rows = Rows(point);
  if (!rows) return rows.status();
  Db& db = impl_->db;
  auto values = db.Prepare(
      "SELECT tv.value FROM trend_values tv JOIN measures m ON m.measure_pk = tv.measure_pk "
      "JOIN points p ON p.point_pk = m.point_pk WHERE p.point_id = ?1 AND m.name = ?2 "
      "AND tv.start_ns >= ?3 AND tv.start_ns < ?4 AND (tv.flags & 1) = 0");
  if (!values) return values.status();
  auto update = db.Prepare(
      "UPDATE baselines SET median = ?3, mad = ?4, count = ?5, learned_ns = ?6, alert = ?7, "
      "danger = ?8 WHERE point = ?1 AND measure = ?2");
  if (!update) return update.status();
  int learned = 0;
  for (const BaselineRow& row : *rows) {
    if (row.learned_ns || row.end_ns > now_ns) continue;
    values->Bind(1, row.point).Bind(2, row.measure).Bind(3, row.start_ns).Bind(4, row.end_ns);
    std::vector<double> found;
    int rc = SQLITE_ROW;
    while ((rc = values->Step()) == SQLITE_ROW) found.push_back(values->Real(0));
    values->Reset();
    if (rc != SQLITE_DONE) return Error{"reading trend values: " + db.ErrorMessage()};
    if (static_cast<std::int64_t>(found.size()) < kMinIntervals) continue;
    auto stats = estimators::ComputeRobustStats(found);
    if (!stats.ok()) continue;
    const estimators::StatisticalLimits limits = estimators::LimitsFrom(*stats, rule);
    update->Bind(1, row.point).Bind(2, row.measure).Bind(3, stats->median).Bind(4, stats->mad);
    update->Bind(5, static_cast<std::int64_t>(stats->count)).Bind(6, now_ns);
    update->Bind(7, limits.alert).Bind(8, limits.danger);
    rc = update->Step();
    update->Reset();
    if (rc != SQLITE_DONE) return Error{"storing a baseline: " + db.ErrorMessage()};
    ++learned;
  }
  return learned;
}

Result<std::vector<BaselineRow>> BaselineStore::Rows(const std::string& point) {
  auto select = impl_->db.Prepare(
      "SELECT point, measure, median, mad, count, start_ns, end_ns, learned_ns, alert, danger "
      "FROM baselines WHERE ?1 = '' OR point = ?1 ORDER BY point, measure");
  if (!select) return select.status();
  select->Bind(1, point);
  std::vector<BaselineRow> rows;
  int rc = SQLITE_ROW;
  auto optional_real = [&](int column) -> std::optional<double> {
    if (select->IsNull(column)) return std::nullopt;
    return select->Real(column);
  };
  while ((rc = select->Step()) == SQLITE_ROW) {
    BaselineRow row;
    row.point = select->Text(0);
    row.measure = select->Text(1);
    row.median = optional_real(2);
    row.mad = optional_real(3);
    row.count = select->Int(4);
    row.start_ns = select->Int(5);
    row.end_ns = select->Int(6);
    if (!select->IsNull(7)) row.learned_ns = select->Int(7);
    row.alert = optional_real(8);
    row.danger = optional_real(9);
    rows.push_back(std::move(row));
  }
  if (rc != SQLITE_DONE) return Error{"reading baselines: " + impl_->db.ErrorMessage()};
  return rows;
}

}  // namespace spinward::storage
