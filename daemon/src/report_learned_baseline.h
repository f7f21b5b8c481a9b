// The report's baseline when `spinward baseline` has learned one: a measure's learned median (over
// the learning period the engineer chose after commissioning or maintenance) is the level it is
// ranked against, with its provenance shown. Measures without a learned baseline, and every
// reference spectrum, come from the fallback provider (normally CommissioningBaseline).
// Thread-safety: one thread at a time, like the provider it wraps.
#pragma once

#include <map>
#include <string>
#include <utility>
#include <vector>

#include "report_baseline.h"
#include "spinward/storage/baseline_store.h"

namespace spinward::daemon {

class LearnedBaselineProvider final : public BaselineProvider {
 public:
  // `learned`: rows from ReportReader::LearnedBaselines; rows still learning are ignored.
  LearnedBaselineProvider(const std::vector<storage::BaselineRow>& learned,
                          BaselineProvider& fallback);

  Result<std::optional<BaselineLevel>> Level(storage::ReportReader& reader,
                                             const storage::ReportMeasure& measure,
                                             std::int64_t before_ns) override;
  Result<std::optional<storage::StoredSpectrum>> Spectrum(storage::ReportReader& reader,
                                                          const std::string& point_id) override;

 private:
  std::map<std::pair<std::string, std::string>, storage::BaselineRow> learned_;
  BaselineProvider& fallback_;
};

}  // namespace spinward::daemon
