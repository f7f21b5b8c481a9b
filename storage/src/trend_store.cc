#include "spinward/storage/trend_store.h"
#include "json_text.h"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <utility>

#include "schema.h"
#include "sqlite_db.h"
#include "trend_row_columns.h"

namespace spinward::storage {
namespace {

using internal::Db;
using internal::SqlError;
using internal::Statement;

constexpr std::int64_t kHourNs = 3600LL * 1000000000LL;
constexpr std::int64_t kDayNs = 24 * kHourNs;

std::int64_t FloorTo(std::int64_t t, std::int64_t step) {
  std::int64_t r = t % step;
  return r < 0 ? t - r - step : t - r;
}

std::string JsonNumber(double v) {
  if (!std::isfinite(v)) return "null";
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.17g", v);
  return buf;
}

std::string DefaultOutboxPayload(const AlarmEventRecord& e) {
  return "{\"type\":\"alarm_event\",\"event_id\":" + JsonString(e.event_id) +
         ",\"time_ns\":" + std::to_string(e.time_ns) + ",\"point\":" + JsonString(e.point_id) +
         ",\"measure\":" + JsonString(e.measure) + ",\"from\":" + JsonString(e.from_state) +
         ",\"to\":" + JsonString(e.to_state) + ",\"value\":" + JsonNumber(e.value) +
         ",\"limit\":" + (e.limit ? JsonNumber(*e.limit) : std::string("null")) +
         ",\"message\":" + JsonString(e.message) + "}";
}

// A failed SQL step inside Write: carries SQLite's code so the writer can decide to retry.
struct StepFailure {
  int code;
  std::string what;
};

}  // namespace

Result<TrendLevel> ParseTrendLevel(std::string_view text) {
  if (text == "raw") return TrendLevel::kRaw;
  if (text == "hourly") return TrendLevel::kHourly;
  if (text == "daily") return TrendLevel::kDaily;
  return Error{"level '" + std::string(text) + "' is not one of raw, hourly, daily"};
}

std::string_view ToString(TrendLevel level) {
  switch (level) {
    case TrendLevel::kRaw:
      return "raw";
    case TrendLevel::kHourly:
      return "hourly";
    case TrendLevel::kDaily:
      return "daily";
  }
  return "raw";
}

Status RetentionPolicy::Validate() const {
  auto check = [](const char* name, int days) -> std::optional<std::string> {
    if (days < 0)
      return std::string(name) + " " + std::to_string(days) + " must be 0 (forever) or more";
    return std::nullopt;
  };
  for (auto [name, days] :
       {std::pair{"raw_days", raw_days}, std::pair{"hourly_days", hourly_days},
        std::pair{"daily_days", daily_days}, std::pair{"spectrum_days", spectrum_days}}) {
    if (auto why = check(name, days)) return Status::Fail("retention: " + *why);
  }
  if (prune_batch_rows < 1) {
    return Status::Fail("retention: prune_batch_rows " + std::to_string(prune_batch_rows) +
                        " must be at least 1");
  }
  return Status::Ok();
}

Status StoreOptions::Validate() const {
  if (busy_timeout_ms < 0) {
    return Status::Fail("storage: busy_timeout_ms " + std::to_string(busy_timeout_ms) +
                        " must not be negative");
  }
  if (spectrum_spacing_ns < 0) {
    return Status::Fail("storage: spectrum_spacing_ns " + std::to_string(spectrum_spacing_ns) +
                        " must not be negative");
  }
  return retention.Validate();
}

struct TrendStore::Impl {
  std::string path;
  StoreOptions options;
  Db db;
  bool read_only = false;
  std::int64_t prune_cursor[4] = {0, 0, 0, 0};

  Result<Statement> Prepare(std::string_view sql) { return db.Prepare(sql); }

  // Runs a statement to completion; a failure becomes a StepFailure for Write's error path.
  std::optional<StepFailure> Run(Statement& stmt, const char* what) {
    int rc = stmt.Step();
    stmt.Reset();
    if (rc == SQLITE_DONE || rc == SQLITE_ROW) return std::nullopt;
    return StepFailure{rc, std::string(what) + ": " + db.ErrorMessage()};
  }

  Result<std::int64_t> PointPk(std::string_view point_id, bool create, std::int64_t now_ns);
  Result<std::int64_t> MeasurePk(std::int64_t point_pk, std::string_view point_id,
                                 std::string_view measure);
};

Result<std::unique_ptr<TrendStore::Impl>> TrendStore::OpenChecked(const std::string& path,
                                                                  const StoreOptions& options,
                                                                  bool read_only) {
  if (auto ok = options.Validate(); !ok) return Error{ok.message()};
  std::error_code ec;
  bool exists = std::filesystem::exists(path, ec);
  if (read_only && !exists) return Error{"database '" + path + "' does not exist"};
  if (exists && std::filesystem::is_directory(path, ec)) {
    return Error{"database '" + path + "' is a directory, not a file"};
  }
  auto db = Db::Open(path, read_only, /*create=*/!exists);
  if (!db) return db.status();
  auto refuse = [&](const std::string& why) {
    return Error{"refusing database '" + path + "': " + why + "; the file was left unchanged"};
  };
  if (auto error =
          db->ExecCoded("PRAGMA busy_timeout = " + std::to_string(options.busy_timeout_ms))) {
    return refuse(error->message);
  }
  // Reading the schema reads the file header: this is where a file that is no database fails.
  auto schema = db->QueryInt("PRAGMA schema_version");
  if (!schema) {
    if (db->ErrorCode() == SQLITE_NOTADB) return refuse("it is not a SQLite database");
    if (db->ErrorCode() == SQLITE_CORRUPT)
      return refuse("it is damaged (" + db->ErrorMessage() + ")");
    return refuse(schema.message());
  }
  auto version = db->QueryInt("PRAGMA user_version");
  if (!version) return refuse(version.message());
  if (*version > kSchemaVersion) {
    return refuse("its schema version " + std::to_string(*version) +
                  " is newer than this build's " + std::to_string(kSchemaVersion) +
                  " (a newer Spinward wrote it)");
  }
  if (read_only && *version < kSchemaVersion) {
    return refuse("its schema version " + std::to_string(*version) + " is older than " +
                  std::to_string(kSchemaVersion) +
                  "; open it once read-write (the daemon) to migrate");
  }
  if (exists && options.quick_check_on_open) {
    auto check = db->Prepare("PRAGMA quick_check");
    if (!check) {
      return refuse("it is damaged (" + check.message() + ")");
    }
    int rc = check->Step();
    if (rc != SQLITE_ROW) return refuse("it is damaged (" + db->ErrorMessage() + ")");
    std::string first = check->Text(0);
    if (first != "ok") return refuse("it failed PRAGMA quick_check (" + first + ")");
  }
  if (!read_only) {
    auto mode = db->Prepare("PRAGMA journal_mode = WAL");
    if (!mode) return refuse(mode.message());
    if (mode->Step() != SQLITE_ROW || mode->Text(0) != "wal") {
      return refuse("cannot switch it to WAL journal mode (" + db->ErrorMessage() + ")");
    }
  }
  std::string pragmas = "PRAGMA foreign_keys = ON; PRAGMA synchronous = ";
  pragmas += options.synchronous_full ? "FULL" : "NORMAL";
  if (auto error = db->ExecCoded(pragmas)) return refuse(error->message);
  if (!read_only) {
    if (auto migrated = internal::Migrate(*db, path, kSchemaVersion); !migrated) {
      return Error{migrated.message()};
    }
  }
  auto impl = std::make_unique<TrendStore::Impl>();
  impl->path = path;
  impl->options = options;
  impl->db = std::move(*db);
  impl->read_only = read_only;
  return impl;
}

Result<TrendStore> TrendStore::Open(const std::string& path, const StoreOptions& options) {
  auto impl = OpenChecked(path, options, false);
  if (!impl) return impl.status();
  return TrendStore(std::move(*impl));
}

Result<TrendStore> TrendStore::OpenReadOnly(const std::string& path, const StoreOptions& options) {
  auto impl = OpenChecked(path, options, true);
  if (!impl) return impl.status();
  return TrendStore(std::move(*impl));
}

TrendStore::TrendStore(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
TrendStore::TrendStore(TrendStore&&) noexcept = default;
TrendStore& TrendStore::operator=(TrendStore&&) noexcept = default;
TrendStore::~TrendStore() = default;

const std::string& TrendStore::path() const { return impl_->path; }

Result<int> TrendStore::SchemaVersion() {
  auto v = impl_->db.QueryInt("PRAGMA user_version");
  if (!v) return v.status();
  return static_cast<int>(*v);
}

Result<std::int64_t> TrendStore::Impl::PointPk(std::string_view point_id, bool create,
                                               std::int64_t now_ns) {
  auto find = db.Prepare("SELECT point_pk FROM points WHERE point_id = ?");
  if (!find) return find.status();
  find->Bind(1, point_id);
  int rc = find->Step();
  if (rc == SQLITE_ROW) return find->Int(0);
  if (rc != SQLITE_DONE)
    return Error{"looking up point '" + std::string(point_id) + "': " + db.ErrorMessage()};
  if (!create) return Error{"point '" + std::string(point_id) + "' is not in the database"};
  auto insert = db.Prepare("INSERT INTO points (point_id, created_ns) VALUES (?, ?)");
  if (!insert) return insert.status();
  insert->Bind(1, point_id).Bind(2, now_ns);
  if (insert->Step() != SQLITE_DONE) {
    return Error{"adding point '" + std::string(point_id) + "': " + db.ErrorMessage()};
  }
  return db.LastInsertRowid();
}

Result<std::int64_t> TrendStore::Impl::MeasurePk(std::int64_t point_pk, std::string_view point_id,
                                                 std::string_view measure) {
  auto find = db.Prepare("SELECT measure_pk FROM measures WHERE point_pk = ? AND name = ?");
  if (!find) return find.status();
  find->Bind(1, point_pk).Bind(2, measure);
  if (find->Step() == SQLITE_ROW) return find->Int(0);
  std::string known;
  auto list = db.Prepare("SELECT name FROM measures WHERE point_pk = ? ORDER BY name");
  if (list) {
    list->Bind(1, point_pk);
    while (list->Step() == SQLITE_ROW) known += (known.empty() ? "" : ", ") + list->Text(0);
  }
  return Error{"point '" + std::string(point_id) + "' has no measure '" + std::string(measure) +
               "' (it has: " + (known.empty() ? "none" : known) + ")"};
}

WriteOutcome TrendStore::Write(const WriteBatch& batch) {
  WriteOutcome outcome;
  Impl& s = *impl_;
  if (s.read_only) {
    outcome.status = Status::Fail("database '" + s.path + "' was opened read-only");
    return outcome;
  }
  if (batch.empty()) return outcome;
  auto fail = [&](int code, const std::string& what) {
    s.db.ExecCoded("ROLLBACK");  // may already be rolled back by SQLite (disk full, I/O error)
    outcome.status = Status::Fail("writing to '" + s.path + "': " + what);
    outcome.retryable = internal::IsRetryable(code);
    outcome.intervals_written = 0;
    outcome.events_written = 0;
    return outcome;
  };
  if (auto error = s.db.ExecCoded("BEGIN IMMEDIATE")) return fail(error->code, error->message);

  auto prepare_all = [&]() -> Result<std::vector<Statement>> {
    const char* sql[] = {
        /*0*/ "INSERT INTO points (point_id, created_ns) VALUES (?1, ?2) ON CONFLICT DO NOTHING",
        /*1*/ "SELECT point_pk FROM points WHERE point_id = ?1",
        /*2*/ "SELECT measure_pk, unit FROM measures WHERE point_pk = ?1 AND name = ?2",
        /*3*/
        "INSERT INTO measures (point_pk, name, kind, unit, lo_hz, hi_hz) VALUES (?1, ?2, ?3, ?4, "
        "?5, ?6)",
        /*4*/
        "INSERT INTO trend_values (measure_pk, start_ns, end_ns, value, flags) "
        "VALUES (?1, ?2, ?3, ?4, ?5) ON CONFLICT DO NOTHING",
        /*5*/
        "INSERT INTO rollup_hourly (measure_pk, bucket_ns, min, max, sum, count, fault_count) "
        "VALUES (?1, ?2, ?3, ?3, coalesce(?3, 0), ?4, ?5) ON CONFLICT (measure_pk, bucket_ns) DO "
        "UPDATE SET min = coalesce(min(min, excluded.min), min, excluded.min), "
        "max = coalesce(max(max, excluded.max), max, excluded.max), sum = sum + excluded.sum, "
        "count = count + excluded.count, fault_count = fault_count + excluded.fault_count",
        /*6*/
        "INSERT INTO rollup_daily (measure_pk, bucket_ns, min, max, sum, count, fault_count) "
        "VALUES (?1, ?2, ?3, ?3, coalesce(?3, 0), ?4, ?5) ON CONFLICT (measure_pk, bucket_ns) DO "
        "UPDATE SET min = coalesce(min(min, excluded.min), min, excluded.min), "
        "max = coalesce(max(max, excluded.max), max, excluded.max), sum = sum + excluded.sum, "
        "count = count + excluded.count, fault_count = fault_count + excluded.fault_count",
        /*7*/ "SELECT max(start_ns) FROM spectra WHERE point_pk = ?1",
        /*8*/
        "INSERT INTO spectra (point_pk, start_ns, end_ns, sample_rate_hz, fft_length, "
        "segment_length, segment_count, bin_count, window, scaling, unit, data) "
        "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12)",
        /*9*/
        "INSERT INTO alarm_events (event_id, time_ns, point_pk, measure, from_state, to_state, "
        "value, limit_value, message) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9) "
        "ON CONFLICT (event_id) DO NOTHING",
        /*10*/ "INSERT INTO outbox (event_id, payload, created_ns) VALUES (?1, ?2, ?3)",
        /*11*/
        "INSERT INTO alarm_state (point_pk, measure, state, since_ns, latched, last_value, "
        "last_event_id, updated_ns, ack_by, ack_ns, ack_note, engine_state) "
        "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12) "
        "ON CONFLICT (point_pk, measure) DO UPDATE SET state = excluded.state, "
        "since_ns = excluded.since_ns, latched = excluded.latched, "
        "last_value = excluded.last_value, last_event_id = excluded.last_event_id, "
        "updated_ns = excluded.updated_ns, ack_by = excluded.ack_by, "
        "ack_ns = excluded.ack_ns, ack_note = excluded.ack_note, "
        "engine_state = excluded.engine_state",
    };
    std::vector<Statement> out;
    for (const char* text : sql) {
      auto stmt = s.db.Prepare(text);
      if (!stmt) return stmt.status();
      out.push_back(std::move(*stmt));
    }
    return out;
  };
  auto statements = prepare_all();
  if (!statements) return fail(s.db.ErrorCode(), statements.message());
  auto& st = *statements;

  auto point_pk = [&](const std::string& point_id,
                      std::int64_t now_ns) -> std::variant<std::int64_t, StepFailure> {
    st[0].Bind(1, point_id).Bind(2, now_ns);
    if (auto f = s.Run(st[0], "adding point")) return *f;
    st[1].Bind(1, point_id);
    int rc = st[1].Step();
    std::int64_t pk = st[1].Int(0);
    st[1].Reset();
    if (rc != SQLITE_ROW) return StepFailure{rc, "finding point '" + point_id + "'"};
    return pk;
  };

  std::size_t intervals = 0;
  for (const MeasurementRecord& r : batch.records) {
    auto pk = point_pk(r.point_id, r.interval_start_ns);
    if (auto* f = std::get_if<StepFailure>(&pk)) return fail(f->code, f->what);
    std::int64_t ppk = std::get<std::int64_t>(pk);
    std::int64_t flags = r.sensor_fault ? kFlagSensorFault : 0;

    struct Value {
      std::string_view name;
      std::string_view kind;
      std::string unit;
      std::optional<double> lo, hi;
      double value;
    };
    std::vector<Value> values;
    for (const BandReading& b : r.bands) {
      values.push_back({b.name, "band", b.unit, b.lo_hz, b.hi_hz, b.rms});
    }
    const auto& ind = r.indicators;
    const double indicator_values[] = {ind.rms,          ind.peak,     ind.peak_to_peak,
                                       ind.crest_factor, ind.kurtosis, ind.mean};
    if (ind.count > 0) {
      for (std::size_t i = 0; i < std::size(kIndicatorMeasures); ++i) {
        values.push_back({kIndicatorMeasures[i].name, "indicator",
                          kIndicatorMeasures[i].dimensionless ? std::string("1") : r.sample_unit,
                          std::nullopt, std::nullopt, indicator_values[i]});
      }
    }
    for (const Value& v : values) {
      if (!std::isfinite(v.value)) {
        outcome.warnings.push_back("point '" + r.point_id + "' measure '" + std::string(v.name) +
                                   "': non-finite value skipped");
        continue;
      }
      st[2].Bind(1, ppk).Bind(2, v.name);
      int rc = st[2].Step();
      std::int64_t mpk = 0;
      if (rc == SQLITE_ROW) {
        mpk = st[2].Int(0);
        std::string unit = st[2].Text(1);
        st[2].Reset();
        if (unit != v.unit) {
          outcome.warnings.push_back("point '" + r.point_id + "' measure '" + std::string(v.name) +
                                     "' is stored in '" + unit + "' but the record says '" +
                                     v.unit + "': value skipped");
          continue;
        }
      } else {
        st[2].Reset();
        if (rc != SQLITE_DONE) return fail(rc, "finding measure: " + s.db.ErrorMessage());
        st[3].Bind(1, ppk).Bind(2, v.name).Bind(3, v.kind).Bind(4, v.unit);
        st[3].BindOptional(5, v.lo).BindOptional(6, v.hi);
        if (auto f = s.Run(st[3], "adding measure")) return fail(f->code, f->what);
        mpk = s.db.LastInsertRowid();
      }
      st[4].Bind(1, mpk).Bind(2, r.interval_start_ns).Bind(3, r.interval_end_ns).Bind(4, v.value);
      st[4].Bind(5, flags);
      if (auto f = s.Run(st[4], "adding trend value")) return fail(f->code, f->what);
      if (s.db.Changes() == 0) continue;  // this interval is stored already (a retried batch)
      ++intervals;
      for (auto [stmt, step] : {std::pair{&st[5], kHourNs}, std::pair{&st[6], kDayNs}}) {
        stmt->Bind(1, mpk).Bind(2, FloorTo(r.interval_start_ns, step));
        if (r.sensor_fault) {
          stmt->BindNull(3).Bind(4, std::int64_t{0}).Bind(5, std::int64_t{1});
        } else {
          stmt->Bind(3, v.value).Bind(4, std::int64_t{1}).Bind(5, std::int64_t{0});
        }
        if (auto f = s.Run(*stmt, "updating roll-up")) return fail(f->code, f->what);
      }
    }

    if (!r.spectrum.values.empty()) {
      st[7].Bind(1, ppk);
      int rc = st[7].Step();
      bool has_last = rc == SQLITE_ROW && !st[7].IsNull(0);
      std::int64_t last = has_last ? st[7].Int(0) : 0;
      st[7].Reset();
      if (rc != SQLITE_ROW) return fail(rc, "finding the latest spectrum: " + s.db.ErrorMessage());
      // Spectra are kept every spectrum_spacing_ns, and with every alarm transition the record
      // caused (an event of its point in the same batch), so the evidence of a change is at hand.
      const bool caused_transition =
          std::any_of(batch.events.begin(), batch.events.end(),
                      [&](const AlarmEventRecord& e) { return e.point_id == r.point_id; });
      if (!has_last || caused_transition ||
          r.interval_start_ns - last >= s.options.spectrum_spacing_ns) {
        SpectrumSnapshot snapshot{
            r.spectrum,
            r.sample_unit.empty()
                ? std::string()
                : "(" + r.sample_unit + ")^2" +
                      (r.spectrum.scaling == estimators::Scaling::kDensity ? "/Hz" : "")};
        auto blob = EncodeSpectrumBlob(snapshot, s.options.spectrum_precision);
        if (!blob) {
          outcome.warnings.push_back("point '" + r.point_id +
                                     "': spectrum not stored: " + blob.message());
        } else {
          st[8].Bind(1, ppk).Bind(2, r.interval_start_ns).Bind(3, r.interval_end_ns);
          st[8].Bind(4, r.spectrum.sample_rate_hz);
          st[8].Bind(5, static_cast<std::int64_t>(r.spectrum.fft_length));
          st[8].Bind(6, static_cast<std::int64_t>(r.spectrum.segment_length));
          st[8].Bind(7, static_cast<std::int64_t>(r.spectrum.segment_count));
          st[8].Bind(8, static_cast<std::int64_t>(r.spectrum.values.size()));
          st[8].Bind(9, WindowKindName(r.spectrum.window.kind));
          st[8].Bind(10, ScalingName(r.spectrum.scaling)).Bind(11, snapshot.unit);
          st[8].BindBlob(12, blob->data(), blob->size());
          if (auto f = s.Run(st[8], "adding spectrum")) return fail(f->code, f->what);
        }
      }
    }
  }

  std::size_t events = 0;
  for (const AlarmEventRecord& e : batch.events) {
    auto pk = point_pk(e.point_id, e.time_ns);
    if (auto* f = std::get_if<StepFailure>(&pk)) return fail(f->code, f->what);
    st[9].Bind(1, e.event_id).Bind(2, e.time_ns).Bind(3, std::get<std::int64_t>(pk));
    st[9].Bind(4, e.measure).Bind(5, e.from_state).Bind(6, e.to_state);
    st[9].BindOptional(7, std::isfinite(e.value) ? std::optional<double>(e.value) : std::nullopt);
    st[9].BindOptional(8, e.limit).Bind(9, e.message);
    if (auto f = s.Run(st[9], "adding alarm event")) return fail(f->code, f->what);
    if (s.db.Changes() == 0) continue;  // stored by an earlier attempt
    ++events;
    st[10].Bind(1, e.event_id);
    st[10].Bind(2, e.outbox_payload.empty() ? DefaultOutboxPayload(e) : e.outbox_payload);
    st[10].Bind(3, e.time_ns);
    if (auto f = s.Run(st[10], "adding the event to the outbox")) return fail(f->code, f->what);
  }
  for (const AlarmStateRecord& a : batch.states) {
    auto pk = point_pk(a.point_id, a.updated_ns);
    if (auto* f = std::get_if<StepFailure>(&pk)) return fail(f->code, f->what);
    st[11].Bind(1, std::get<std::int64_t>(pk)).Bind(2, a.measure).Bind(3, a.state);
    st[11].Bind(4, a.since_ns).Bind(5, std::int64_t{a.latched ? 1 : 0});
    st[11].BindOptional(
        6, std::isfinite(a.last_value) ? std::optional<double>(a.last_value) : std::nullopt);
    st[11].Bind(7, a.last_event_id).Bind(8, a.updated_ns).Bind(9, a.ack_by).Bind(10, a.ack_ns);
    st[11].Bind(11, a.ack_note).Bind(12, a.engine_state);
    if (auto f = s.Run(st[11], "saving alarm state")) return fail(f->code, f->what);
  }
  statements->clear();
  if (auto error = s.db.ExecCoded("COMMIT")) return fail(error->code, error->message);
  outcome.intervals_written = intervals;
  outcome.events_written = events;
  return outcome;
}

Result<PruneReport> TrendStore::PruneStep(std::int64_t now_ns) {
  Impl& s = *impl_;
  const RetentionPolicy& r = s.options.retention;
  PruneReport report;
  struct Level {
    const char* table;
    const char* time_column;
    int days;
    std::int64_t* count;
  };
  // A bucket is pruned once its whole span is past the horizon, hence the end-of-bucket terms.
  Level levels[] = {
      {"trend_values", "end_ns", r.raw_days, &report.raw_rows},
      {"rollup_hourly", "bucket_ns + 3600000000000", r.hourly_days, &report.hourly_rows},
      {"rollup_daily", "bucket_ns + 86400000000000", r.daily_days, &report.daily_rows},
      {"spectra", "end_ns", r.spectrum_days, &report.spectrum_rows},
  };
  for (std::size_t i = 0; i < std::size(levels); ++i) {
    const Level& level = levels[i];
    if (level.days == 0) continue;
    std::int64_t horizon = now_ns - static_cast<std::int64_t>(level.days) * kDayNs;
    // Rows arrive roughly in time order, so the oldest sit at the low rowids: delete within one
    // rowid range at a time (a bounded, indexed amount of work under the write lock).
    auto low = s.db.QueryInt(std::string("SELECT coalesce(min(rowid), 0) FROM ") + level.table);
    if (!low) return low.status();
    std::int64_t from = std::max(*low, s.prune_cursor[i]);
    std::string sql = std::string("DELETE FROM ") + level.table +
                      " WHERE rowid >= ?1 AND rowid < ?2 AND " + level.time_column + " < ?3";
    if (auto error = s.db.ExecCoded("BEGIN IMMEDIATE")) {
      return Error{"pruning '" + s.path + "': " + error->message};
    }
    auto stmt = s.db.Prepare(sql);
    if (!stmt) {
      s.db.ExecCoded("ROLLBACK");
      return stmt.status();
    }
    stmt->Bind(1, from).Bind(2, from + r.prune_batch_rows).Bind(3, horizon);
    if (stmt->Step() != SQLITE_DONE) {
      std::string why = s.db.ErrorMessage();
      stmt = Statement();
      s.db.ExecCoded("ROLLBACK");
      return Error{"pruning " + std::string(level.table) + " in '" + s.path + "': " + why};
    }
    *level.count = s.db.Changes();
    stmt = Statement();
    if (auto error = s.db.ExecCoded("COMMIT")) {
      s.db.ExecCoded("ROLLBACK");
      return Error{"pruning '" + s.path + "': " + error->message};
    }
    // Nothing old in this range: the pass is over; the next pass starts from the lowest rowid.
    s.prune_cursor[i] = *level.count > 0 ? from + r.prune_batch_rows : 0;
  }
  return report;
}

Result<int> TrendStore::Acknowledge(const std::string& point_id, const std::string& measure,
                                    const std::string& by, const std::string& note,
                                    std::int64_t time_ns) {
  Impl& s = *impl_;
  if (by.empty())
    return Error{"acknowledgement of '" + point_id + "': who acknowledges ('by') is empty"};
  if (auto error = s.db.ExecCoded("BEGIN IMMEDIATE")) {
    return Error{"acknowledging in '" + s.path + "': " + error->message};
  }
  auto fail = [&](const std::string& why) -> Result<int> {
    s.db.ExecCoded("ROLLBACK");
    return Error{why};
  };
  auto ppk = s.PointPk(point_id, false, time_ns);
  if (!ppk) return fail(ppk.message());
  auto update = s.db.Prepare(
      "UPDATE alarm_state SET ack_by = ?3, ack_ns = ?4, ack_note = ?5, "
      "latched = CASE WHEN state = 'normal' THEN 0 ELSE latched END "
      "WHERE point_pk = ?1 AND (?2 = '' OR measure = ?2) AND (state <> 'normal' OR latched = 1)");
  if (!update) return fail(update.message());
  update->Bind(1, *ppk).Bind(2, measure).Bind(3, by).Bind(4, time_ns).Bind(5, note);
  if (update->Step() != SQLITE_DONE) return fail("acknowledging: " + s.db.ErrorMessage());
  int acknowledged = static_cast<int>(s.db.Changes());
  if (acknowledged == 0) {
    return fail("point '" + point_id + "'" + (measure.empty() ? "" : " measure '" + measure + "'") +
                " has no alarm or latch to acknowledge");
  }
  auto insert = s.db.Prepare(
      "INSERT INTO acknowledgements (point_pk, measure, ack_by, time_ns, note) VALUES (?, ?, ?, ?, "
      "?)");
  if (!insert) return fail(insert.message());
  insert->Bind(1, *ppk).Bind(2, measure).Bind(3, by).Bind(4, time_ns).Bind(5, note);
  if (insert->Step() != SQLITE_DONE)
    return fail("recording acknowledgement: " + s.db.ErrorMessage());
  update = Statement();
  insert = Statement();
  if (auto error = s.db.ExecCoded("COMMIT")) return fail(error->message);
  return acknowledged;
}

Result<std::int64_t> TrendStore::SetMaxPageCount(std::int64_t pages) {
  if (pages < 1) return Error{"max_page_count " + std::to_string(pages) + " must be at least 1"};
  return impl_->db.QueryInt("PRAGMA max_page_count = " + std::to_string(pages));
}

namespace {

const char* TrendSql(TrendLevel level) {
  switch (level) {
    case TrendLevel::kRaw:
      return "SELECT start_ns, end_ns, value, value, value, 1 - (flags & 1), flags & 1 "
             "FROM trend_values WHERE measure_pk = ?1 AND start_ns >= ?2 AND start_ns < ?3 "
             "ORDER BY start_ns";
    case TrendLevel::kHourly:
      return "SELECT bucket_ns, bucket_ns + 3600000000000, sum / nullif(count, 0), min, max, "
             "count, "
             "fault_count FROM rollup_hourly WHERE measure_pk = ?1 AND bucket_ns >= ?2 AND "
             "bucket_ns < ?3 ORDER BY bucket_ns";
    case TrendLevel::kDaily:
      return "SELECT bucket_ns, bucket_ns + 86400000000000, sum / nullif(count, 0), min, max, "
             "count, "
             "fault_count FROM rollup_daily WHERE measure_pk = ?1 AND bucket_ns >= ?2 AND "
             "bucket_ns < ?3 ORDER BY bucket_ns";
  }
  return "";
}

}  // namespace

Result<std::vector<TrendRow>> TrendStore::Trend(const TrendQuery& query) {
  Impl& s = *impl_;
  if (query.until_ns <= query.since_ns) {
    return Error{"trend: until " + std::to_string(query.until_ns) + " is not after since " +
                 std::to_string(query.since_ns)};
  }
  auto ppk = s.PointPk(query.point_id, false, 0);
  if (!ppk) return ppk.status();
  auto mpk = s.MeasurePk(*ppk, query.point_id, query.measure);
  if (!mpk) return mpk.status();
  auto stmt = s.db.Prepare(TrendSql(query.level));
  if (!stmt) return stmt.status();
  stmt->Bind(1, *mpk).Bind(2, query.since_ns).Bind(3, query.until_ns);
  std::vector<TrendRow> rows;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    rows.push_back(internal::TrendRowFromColumns(*stmt));
  }
  if (rc != SQLITE_DONE) return Error{"trend query on '" + s.path + "': " + s.db.ErrorMessage()};
  return rows;
}

Result<std::vector<std::string>> TrendStore::ExplainTrendQuery(TrendLevel level) {
  auto stmt = impl_->db.Prepare(std::string("EXPLAIN QUERY PLAN ") + TrendSql(level));
  if (!stmt) return stmt.status();
  stmt->Bind(1, std::int64_t{1}).Bind(2, std::int64_t{0}).Bind(3, std::int64_t{1});
  std::vector<std::string> lines;
  while (stmt->Step() == SQLITE_ROW) lines.push_back(stmt->Text(3));
  return lines;
}

namespace {

constexpr const char* kEventColumns =
    "e.event_id, e.time_ns, p.point_id, e.measure, e.from_state, e.to_state, e.value, "
    "e.limit_value, e.message, coalesce(o.payload, '')";

AlarmEventRecord ReadEvent(const Statement& stmt) {
  AlarmEventRecord e;
  e.event_id = stmt.Text(0);
  e.time_ns = stmt.Int(1);
  e.point_id = stmt.Text(2);
  e.measure = stmt.Text(3);
  e.from_state = stmt.Text(4);
  e.to_state = stmt.Text(5);
  e.value = stmt.IsNull(6) ? std::nan("") : stmt.Real(6);
  if (!stmt.IsNull(7)) e.limit = stmt.Real(7);
  e.message = stmt.Text(8);
  e.outbox_payload = stmt.Text(9);
  return e;
}

constexpr const char* kStateColumns =
    "p.point_id, a.measure, a.state, a.since_ns, a.latched, a.last_value, "
    "coalesce(a.last_event_id, ''), a.ack_by, a.ack_ns, a.ack_note, a.updated_ns, a.engine_state";

AlarmStateRecord ReadState(const Statement& stmt, int at) {
  AlarmStateRecord a;
  a.point_id = stmt.Text(at + 0);
  a.measure = stmt.Text(at + 1);
  a.state = stmt.Text(at + 2);
  a.since_ns = stmt.Int(at + 3);
  a.latched = stmt.Int(at + 4) != 0;
  a.last_value = stmt.IsNull(at + 5) ? std::nan("") : stmt.Real(at + 5);
  a.last_event_id = stmt.Text(at + 6);
  a.ack_by = stmt.Text(at + 7);
  a.ack_ns = stmt.Int(at + 8);
  a.ack_note = stmt.Text(at + 9);
  a.updated_ns = stmt.Int(at + 10);
  a.engine_state = stmt.Text(at + 11);
  return a;
}

}  // namespace

Result<std::vector<AlarmEventRecord>> TrendStore::Alarms(std::int64_t since_ns, bool open_only) {
  Impl& s = *impl_;
  std::string sql = std::string("SELECT ") + kEventColumns +
                    " FROM alarm_events e JOIN points p USING (point_pk) "
                    "LEFT JOIN outbox o ON o.event_id = e.event_id WHERE e.time_ns >= ?1";
  if (open_only) {
    sql +=
        " AND e.event_pk = (SELECT max(e2.event_pk) FROM alarm_events e2 WHERE e2.point_pk = "
        "e.point_pk AND e2.measure = e.measure) AND EXISTS (SELECT 1 FROM alarm_state a WHERE "
        "a.point_pk = e.point_pk AND a.measure = e.measure AND (a.state <> 'normal' OR a.latched = "
        "1))";
  }
  sql += " ORDER BY e.time_ns, e.event_pk";
  auto stmt = s.db.Prepare(sql);
  if (!stmt) return stmt.status();
  stmt->Bind(1, since_ns);
  std::vector<AlarmEventRecord> events;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) events.push_back(ReadEvent(*stmt));
  if (rc != SQLITE_DONE) return Error{"alarm query on '" + s.path + "': " + s.db.ErrorMessage()};
  return events;
}

Result<std::vector<MeasureStatus>> TrendStore::CurrentStatus() {
  Impl& s = *impl_;
  // Latest interval per measure through the (measure_pk, start_ns) index; alarm states with no
  // measure row (an alarm on a measure never stored) are listed too.
  std::string sql = std::string(
                        "WITH keys AS (SELECT point_pk, name AS measure FROM measures UNION "
                        "SELECT point_pk, measure FROM alarm_state) "
                        "SELECT p.point_id, k.measure, coalesce(m.unit, ''), t.value, t.start_ns, "
                        "t.flags, a.point_pk IS NOT NULL, ") +
                    kStateColumns +
                    " FROM keys k JOIN points p ON p.point_pk = k.point_pk "
                    "LEFT JOIN measures m ON m.point_pk = k.point_pk AND m.name = k.measure "
                    "LEFT JOIN trend_values t ON t.rowid = (SELECT rowid FROM trend_values WHERE "
                    "measure_pk = m.measure_pk ORDER BY start_ns DESC LIMIT 1) "
                    "LEFT JOIN alarm_state a ON a.point_pk = k.point_pk AND a.measure = k.measure "
                    "ORDER BY p.point_id, k.measure";
  auto stmt = s.db.Prepare(sql);
  if (!stmt) return stmt.status();
  std::vector<MeasureStatus> rows;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    MeasureStatus m;
    m.point_id = stmt->Text(0);
    m.measure = stmt->Text(1);
    m.unit = stmt->Text(2);
    if (!stmt->IsNull(3)) {
      m.latest_value = stmt->Real(3);
      m.latest_start_ns = stmt->Int(4);
      m.latest_sensor_fault = (stmt->Int(5) & kFlagSensorFault) != 0;
    }
    if (stmt->Int(6) != 0) m.alarm = ReadState(*stmt, 7);
    rows.push_back(std::move(m));
  }
  if (rc != SQLITE_DONE) return Error{"status query on '" + s.path + "': " + s.db.ErrorMessage()};
  return rows;
}

Result<std::optional<StoredSpectrum>> TrendStore::LatestSpectrum(const std::string& point_id) {
  Impl& s = *impl_;
  auto ppk = s.PointPk(point_id, false, 0);
  if (!ppk) return ppk.status();
  auto stmt = s.db.Prepare(
      "SELECT start_ns, end_ns, data FROM spectra WHERE point_pk = ? ORDER BY start_ns DESC LIMIT "
      "1");
  if (!stmt) return stmt.status();
  stmt->Bind(1, *ppk);
  int rc = stmt->Step();
  if (rc == SQLITE_DONE) return std::optional<StoredSpectrum>();
  if (rc != SQLITE_ROW) return Error{"spectrum query on '" + s.path + "': " + s.db.ErrorMessage()};
  auto snapshot = DecodeSpectrumBlob(stmt->Blob(2));
  if (!snapshot) {
    return Error{"point '" + point_id + "' spectrum at " + std::to_string(stmt->Int(0)) + ": " +
                 snapshot.message()};
  }
  return std::optional<StoredSpectrum>(
      StoredSpectrum{point_id, stmt->Int(0), stmt->Int(1), std::move(*snapshot)});
}

Result<std::vector<AlarmStateRecord>> TrendStore::LoadAlarmStates() {
  Impl& s = *impl_;
  auto stmt = s.db.Prepare(std::string("SELECT ") + kStateColumns +
                           " FROM alarm_state a JOIN points p USING (point_pk) "
                           "ORDER BY p.point_id, a.measure");
  if (!stmt) return stmt.status();
  std::vector<AlarmStateRecord> states;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) states.push_back(ReadState(*stmt, 0));
  if (rc != SQLITE_DONE)
    return Error{"alarm state query on '" + s.path + "': " + s.db.ErrorMessage()};
  return states;
}

Result<std::vector<AcknowledgementRecord>> TrendStore::AcknowledgementsAfter(
    std::int64_t after_id) {
  Impl& s = *impl_;
  auto stmt = s.db.Prepare(
      "SELECT k.ack_id, p.point_id, k.measure, k.ack_by, k.time_ns, k.note FROM acknowledgements k "
      "JOIN points p USING (point_pk) WHERE k.ack_id > ? ORDER BY k.ack_id");
  if (!stmt) return stmt.status();
  stmt->Bind(1, after_id);
  std::vector<AcknowledgementRecord> acks;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    acks.push_back(
        {stmt->Int(0), stmt->Text(1), stmt->Text(2), stmt->Text(3), stmt->Int(4), stmt->Text(5)});
  }
  if (rc != SQLITE_DONE)
    return Error{"acknowledgement query on '" + s.path + "': " + s.db.ErrorMessage()};
  return acks;
}

Result<std::vector<std::pair<std::string, std::string>>> TrendStore::PendingOutbox(int limit) {
  Impl& s = *impl_;
  auto stmt = s.db.Prepare(
      "SELECT event_id, payload FROM outbox WHERE sent_ns IS NULL ORDER BY outbox_pk LIMIT ?");
  if (!stmt) return stmt.status();
  stmt->Bind(1, static_cast<std::int64_t>(limit));
  std::vector<std::pair<std::string, std::string>> pending;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) pending.emplace_back(stmt->Text(0), stmt->Text(1));
  if (rc != SQLITE_DONE) return Error{"outbox query on '" + s.path + "': " + s.db.ErrorMessage()};
  return pending;
}

Result<std::vector<OutboxEntry>> TrendStore::OutboxAfter(std::int64_t after_seq, bool pending_only,
                                                         int limit) {
  Impl& s = *impl_;
  auto stmt = s.db.Prepare(
      std::string("SELECT o.outbox_pk, o.event_id, p.point_id, o.payload, o.sent_ns "
                  "FROM outbox o JOIN alarm_events e ON e.event_id = o.event_id "
                  "JOIN points p ON p.point_pk = e.point_pk WHERE o.outbox_pk > ?1") +
      (pending_only ? " AND o.sent_ns IS NULL" : "") + " ORDER BY o.outbox_pk LIMIT ?2");
  if (!stmt) return stmt.status();
  stmt->Bind(1, after_seq);
  stmt->Bind(2, static_cast<std::int64_t>(limit));
  std::vector<OutboxEntry> entries;
  int rc = 0;
  while ((rc = stmt->Step()) == SQLITE_ROW) {
    entries.push_back(
        {stmt->Int(0), stmt->Text(1), stmt->Text(2), stmt->Text(3), !stmt->IsNull(4)});
  }
  if (rc != SQLITE_DONE) return Error{"outbox query on '" + s.path + "': " + s.db.ErrorMessage()};
  return entries;
}

Result<std::int64_t> TrendStore::LastOutboxSeq() {
  return impl_->db.QueryInt("SELECT COALESCE(MAX(outbox_pk), 0) FROM outbox");
}

Status TrendStore::MarkOutboxSent(const std::string& event_id, std::int64_t sent_ns) {
  Impl& s = *impl_;
  auto stmt = s.db.Prepare("UPDATE outbox SET sent_ns = COALESCE(sent_ns, ?2) WHERE event_id = ?1");
  if (!stmt) return stmt.status();
  stmt->Bind(1, std::string_view(event_id));
  stmt->Bind(2, sent_ns);
  if (stmt->Step() != SQLITE_DONE) {
    return Status::Fail("marking outbox event '" + event_id + "' sent in '" + s.path +
                        "': " + s.db.ErrorMessage());
  }
  if (s.db.Changes() == 0) {
    return Status::Fail("event '" + event_id + "' is not in the outbox of '" + s.path + "'");
  }
  return Status::Ok();
}

Result<int> TrendStore::PruneSentOutbox(std::int64_t sent_before_ns, int max_rows) {
  Impl& s = *impl_;
  // The outbox is walked in seq order, the order rows are sent in, so the old sent rows are
  // found first; the newest row stays so that the next insert cannot reuse its seq.
  auto stmt = s.db.Prepare(
      "DELETE FROM outbox WHERE outbox_pk IN (SELECT outbox_pk FROM outbox "
      "WHERE sent_ns IS NOT NULL AND sent_ns < ?1 "
      "AND outbox_pk < (SELECT MAX(outbox_pk) FROM outbox) ORDER BY outbox_pk LIMIT ?2)");
  if (!stmt) return stmt.status();
  stmt->Bind(1, sent_before_ns);
  stmt->Bind(2, static_cast<std::int64_t>(max_rows));
  if (stmt->Step() != SQLITE_DONE) {
    return Error{"pruning sent outbox rows in '" + s.path + "': " + s.db.ErrorMessage()};
  }
  return static_cast<int>(s.db.Changes());
}

}  // namespace spinward::storage
