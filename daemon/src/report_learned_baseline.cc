#include "report_learned_baseline.h"

#include "spinward/storage/time_text.h"

namespace spinward::daemon {

LearnedBaselineProvider::LearnedBaselineProvider(const std::vector<storage::BaselineRow>& learned,
                                                 BaselineProvider& fallback)
    : fallback_(fallback) {
  for (const auto& row : learned) {
    if (row.learned_ns && row.median) learned_[{row.point, row.measure}] = row;
  }
}

Result<std::optional<BaselineLevel>> LearnedBaselineProvider::Level(
    storage::ReportReader& reader, const storage::ReportMeasure& measure, std::int64_t before_ns) {
  auto it = learned_.find({measure.point_id, measure.name});
  // A baseline learned from data after the report's period would compare the past with its future.
  if (it == learned_.end() || it->second.start_ns >= before_ns) {
    return fallback_.Level(reader, measure, before_ns);
  }
  const storage::BaselineRow& row = it->second;
  return std::optional<BaselineLevel>(BaselineLevel{
      *row.median, row.start_ns, row.end_ns,
      "learned median of " + std::to_string(row.count) + " intervals, " +
          storage::FormatIsoUtc(row.start_ns) + " to " + storage::FormatIsoUtc(row.end_ns)});
}

Result<std::optional<storage::StoredSpectrum>> LearnedBaselineProvider::Spectrum(
    storage::ReportReader& reader, const std::string& point_id) {
  return fallback_.Spectrum(reader, point_id);
}

}  // namespace spinward::daemon
