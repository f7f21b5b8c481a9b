#include "report_baseline.h"

#include <algorithm>
#include <cmath>
#include <vector>

namespace spinward::daemon {
namespace {

constexpr std::int64_t kHourNs = 3600LL * 1'000'000'000LL;

}  // namespace

Result<std::optional<BaselineLevel>> CommissioningBaseline::Level(
    storage::ReportReader& reader, const storage::ReportMeasure& measure, std::int64_t before_ns) {
  auto first = reader.FirstHour(measure.measure_pk);
  if (!first) return first.status();
  if (!first->has_value() || **first >= before_ns) return std::optional<BaselineLevel>();
  const std::int64_t from = **first;
  const std::int64_t to = std::min(from + hours_ * kHourNs, before_ns);
  auto rows = reader.Hourly(measure.measure_pk, from, to);
  if (!rows) return rows.status();
  std::vector<double> means;
  for (const auto& row : *rows) {
    if (std::isfinite(row.value)) means.push_back(row.value);
  }
  if (means.empty()) return std::optional<BaselineLevel>();
  std::sort(means.begin(), means.end());
  const std::size_t n = means.size();
  const double median = n % 2 ? means[n / 2] : 0.5 * (means[n / 2 - 1] + means[n / 2]);
  const long long hours = (to - from) / kHourNs;
  return std::optional<BaselineLevel>(BaselineLevel{
      median, from, to, "median of hourly means, first " + std::to_string(hours) + " h of data"});
}

Result<std::optional<storage::StoredSpectrum>> CommissioningBaseline::Spectrum(
    storage::ReportReader& reader, const std::string& point_id) {
  return reader.FirstSpectrum(point_id);
}

}  // namespace spinward::daemon
