// Learned baselines in the trend database (table `baselines`, schema version 4): per point and
// measure, the robust statistics of its stored trend values over a learning period and the
// statistical limits set from them, with provenance (the period, how many intervals, when learned).
//
// `Start` marks the period for every measure the point has stored so far; once the period has
// ended, `Learn` reads each measure's values in it (intervals flagged as sensor faults left out),
// computes median and scaled MAD (estimators/robust_stats.h) and sets alert and danger. A measure
// with fewer than kMinIntervals values is left unlearned.
// Thread-safety: one thread per BaselineStore; the database's busy timeout covers a daemon writing
// at the same time.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "spinward/estimators/result.h"
#include "spinward/estimators/robust_stats.h"

namespace spinward::storage {

struct BaselineRow {
  std::string point;
  std::string measure;
  std::optional<double> median;
  std::optional<double> mad;  // scaled by 1.4826
  std::int64_t count = 0;     // intervals learned from
  std::int64_t start_ns = 0;
  std::int64_t end_ns = 0;
  std::optional<std::int64_t> learned_ns;  // unset while learning
  std::optional<double> alert;
  std::optional<double> danger;
};

class BaselineStore {
 public:
  static constexpr std::int64_t kMinIntervals = 5;

  // Opens (and migrates, as TrendStore::Open does) the database at `path`.
  static Result<BaselineStore> Open(const std::string& path);
  BaselineStore(BaselineStore&&) noexcept;
  BaselineStore& operator=(BaselineStore&&) noexcept;
  ~BaselineStore();

  // Marks [start_ns, end_ns) for each measure the point has stored, replacing an earlier baseline.
  // Returns how many measures were marked; fails when the point has none stored yet.
  Result<int> Start(const std::string& point, std::int64_t start_ns, std::int64_t end_ns);
  // Learns each of the point's unlearned baselines whose period ended by now_ns. Returns how many
  // were learned.
  Result<int> Learn(const std::string& point, std::int64_t now_ns,
                    const estimators::LimitRule& rule = {});
  // The point's rows (every point's when `point` is empty), by point and measure.
  Result<std::vector<BaselineRow>> Rows(const std::string& point);

 private:
  struct Impl;
  explicit BaselineStore(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace spinward::storage
