// One TrendRow from a statement whose first seven columns are start_ns, end_ns, value, min, max,
// count, fault_count (NULL value/min/max: every interval of the bucket was a sensor fault). Shared
// by the trend query and the report's hourly query, which select the same columns.
#pragma once

#include <cmath>

#include "spinward/storage/trend_store.h"
#include "sqlite_db.h"

namespace spinward::storage::internal {

inline TrendRow TrendRowFromColumns(const Statement& stmt) {
  auto real_or_nan = [&](int column) {
    return stmt.IsNull(column) ? std::nan("") : stmt.Real(column);
  };
  TrendRow row;
  row.start_ns = stmt.Int(0);
  row.end_ns = stmt.Int(1);
  row.value = real_or_nan(2);
  row.min = real_or_nan(3);
  row.max = real_or_nan(4);
  row.count = stmt.Int(5);
  row.fault_count = stmt.Int(6);
  return row;
}

}  // namespace spinward::storage::internal
