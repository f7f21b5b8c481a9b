// Test helpers for the storage suite: records from the invented Larkfield booster station, a raw
// SQLite connection for setting up faults from outside the store, and file comparison.
#pragma once

#include <sqlite3.h>

#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>

#include "spinward/storage/measurement_record.h"
#include "spinward/storage/trend_store.h"

namespace spinward::storage::testing {

// 2026-03-02T10:00:00Z in ns (datetime(2026,3,2,10,tzinfo=utc).timestamp() in Python).
inline constexpr std::int64_t kBaseNs = 1772445600LL * 1000000000LL;
inline constexpr std::int64_t kTenMinNs = 600LL * 1000000000LL;

// One record of pump P-101 (or `point`) with a single velocity band value; no indicators.
inline MeasurementRecord VelocityRecord(std::int64_t start_ns, double mm_s, bool fault = false,
                                        const std::string& point = "P-101") {
  MeasurementRecord r;
  r.point_id = point;
  r.interval_start_ns = start_ns;
  r.interval_end_ns = start_ns + kTenMinNs;
  r.segment_count = 20;
  r.sample_unit = "m/s^2";
  r.bands.push_back({"velocity_rms_10_1000", "mm/s", 10.0, 1000.0, mm_s});
  r.sensor_fault = fault;
  if (fault) r.sensor_fault_reason = "flat line";
  return r;
}

inline std::string ReadBytes(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

// A second, raw connection to the same file, as another process would have.
class RawConnection {
 public:
  explicit RawConnection(const std::filesystem::path& path) {
    sqlite3_open_v2(path.c_str(), &db_, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE, nullptr);
  }
  RawConnection(const RawConnection&) = delete;
  RawConnection& operator=(const RawConnection&) = delete;
  ~RawConnection() { sqlite3_close_v2(db_); }
  // Returns SQLite's result code.
  int Exec(const std::string& sql) {
    return sqlite3_exec(db_, sql.c_str(), nullptr, nullptr, nullptr);
  }
  // First column of the first row as text ("" when there is none).
  std::string Text(const std::string& sql) {
    sqlite3_stmt* stmt = nullptr;
    std::string out;
    if (sqlite3_prepare_v2(db_, sql.c_str(), -1, &stmt, nullptr) == SQLITE_OK &&
        sqlite3_step(stmt) == SQLITE_ROW && sqlite3_column_text(stmt, 0) != nullptr) {
      out = reinterpret_cast<const char*>(sqlite3_column_text(stmt, 0));
    }
    sqlite3_finalize(stmt);
    return out;
  }
  std::int64_t Int(const std::string& sql) { return std::stoll("0" + Text(sql)); }

 private:
  sqlite3* db_ = nullptr;
};

}  // namespace spinward::storage::testing
