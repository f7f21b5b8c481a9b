// Where the nightly report's "baseline" comes from: the level a measure is compared against to
// rank what changed, and the spectrum the latest one is overlaid on. A seam, so learned baselines
// (kept in their own table) can replace the default without touching the report.
// The default, CommissioningBaseline, takes each measure's earliest stored data: the median of its
// hourly means over the first `commissioning_hours` of data (but never later than `before_ns`, so a
// young database still has something to compare against), and each point's first spectrum.
// Thread-safety: one thread at a time (it reads through the caller's reader).
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "spinward/estimators/result.h"
#include "spinward/storage/report_reader.h"

namespace spinward::daemon {

struct BaselineLevel {
  double value = 0.0;  // the measure's unit
  std::int64_t from_ns = 0;
  std::int64_t to_ns = 0;
  std::string source;  // how it was found, shown in the report, e.g. "first 24 h of data"
};

class BaselineProvider {
 public:
  virtual ~BaselineProvider() = default;
  // The measure's reference level, from data before `before_ns`; nullopt when there is none.
  virtual Result<std::optional<BaselineLevel>> Level(storage::ReportReader& reader,
                                                     const storage::ReportMeasure& measure,
                                                     std::int64_t before_ns) = 0;
  // The point's reference spectrum; nullopt when there is none.
  virtual Result<std::optional<storage::StoredSpectrum>> Spectrum(storage::ReportReader& reader,
                                                                  const std::string& point_id) = 0;
};

class CommissioningBaseline final : public BaselineProvider {
 public:
  explicit CommissioningBaseline(int commissioning_hours = 24) : hours_(commissioning_hours) {}
  Result<std::optional<BaselineLevel>> Level(storage::ReportReader& reader,
                                             const storage::ReportMeasure& measure,
                                             std::int64_t before_ns) override;
  Result<std::optional<storage::StoredSpectrum>> Spectrum(storage::ReportReader& reader,
                                                          const std::string& point_id) override;

 private:
  int hours_;
};

}  // namespace spinward::daemon
