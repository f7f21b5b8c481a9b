#include "site_judgement.h"

#include <cmath>
#include <cstdint>
#include <string>

#include "spinward/daemon/iso_presets.h"
#include "spinward/estimators/units.h"
#include "spinward/storage/baseline_store.h"

namespace spinward::daemon {
namespace {

constexpr double kNanosPerSecond = 1e9;

std::string Where(const config::PointConfig& point, const config::AlarmLimitConfig& alarm) {
  return "point " + point.id + ", alarm on " + alarm.measure + ": ";
}

// The measure's unit for messages and payloads; none when the point has no such measure.
Result<std::string> MeasureUnit(const config::PointConfig& point, const std::string& measure) {
  for (const auto& band : point.bands) {
    if (band.name == measure) return std::string(estimators::ToString(band.unit));
  }
  if (const config::OverallMeasure* overall = config::FindOverallMeasure(measure)) {
    return overall->dimensionless ? std::string() : std::string(estimators::ToString(point.unit));
  }
  if (auto unit = config::DiagnosticMeasureUnit(point, measure)) return *unit;
  return Error{"point " + point.id + " has no band or overall indicator named '" + measure + "'"};
}

Result<IsoPresetLimits> PresetLimits(const config::SiteConfig& site,
                                     const config::PointConfig& point,
                                     const config::AlarmLimitConfig& alarm,
                                     const LearnedBaseline* learned) {
  const config::MachineConfig* machine = site.FindMachine(point.machine);
  if (machine == nullptr) {
    return Error{Where(point, alarm) +
                 "preset iso10816-3 needs the point's machine, and no "
                 "machine has id '" +
                 point.machine + "'"};
  }
  if (machine->iso_group != 1 && machine->iso_group != 2) {
    return Error{Where(point, alarm) + "machine " + machine->id + " has ISO group " +
                 std::to_string(machine->iso_group) + "; ISO 10816-3 has groups 1 and 2"};
  }
  const IsoMachineGroup group =
      machine->iso_group == 1 ? IsoMachineGroup::kGroup1 : IsoMachineGroup::kGroup2;
  const IsoSupport support = machine->support == config::MachineSupport::kRigid
                                 ? IsoSupport::kRigid
                                 : IsoSupport::kFlexible;
  if (!alarm.baseline) return IsoAbsoluteLimits(group, support);
  const double baseline = learned != nullptr ? learned->median : *alarm.baseline;
  auto limits = IsoBaselineLimits(group, support, baseline);
  if (!limits.ok()) return Error{Where(point, alarm) + limits.message()};
  return limits;
}

Result<AlarmRule> RuleFrom(const config::SiteConfig& site, const config::PointConfig& point,
                           const config::AlarmLimitConfig& alarm, const LearnedBaseline* learned) {
  AlarmRule rule;
  rule.point_id = point.id;
  rule.measure = alarm.measure;
  auto unit = MeasureUnit(point, alarm.measure);
  if (!unit.ok()) return Error{unit.message()};
  rule.unit = *unit;
  if (alarm.preset == config::AlarmPreset::kIso10816_3) {
    if (alarm.alert || alarm.danger) {
      return Error{Where(point, alarm) +
                   "alert and danger come from preset iso10816-3; "
                   "they may not be given as well"};
    }
    auto limits = PresetLimits(site, point, alarm, learned);
    if (!limits.ok()) return Error{limits.message()};
    rule.high_alert = limits->alert;
    rule.high_danger = limits->danger;
  } else {
    if (!alarm.alert || !alarm.danger) {
      return Error{Where(point, alarm) + "alert and danger are required without a preset"};
    }
    rule.high_alert = *alarm.alert;
    rule.high_danger = *alarm.danger;
  }
  rule.low_alert = alarm.low_alert;
  rule.low_danger = alarm.low_danger;
  rule.deadband_kind = alarm.deadband.kind == config::DeadbandKind::kPercent
                           ? DeadbandKind::kPercent
                           : DeadbandKind::kAbsolute;
  rule.deadband = alarm.deadband.value;
  rule.on_delay_n = alarm.on_delay.n;
  rule.on_delay_m = alarm.on_delay.m;
  rule.off_delay_intervals = alarm.off_delay;
  rule.latching = alarm.latching;
  if (alarm.stale_after_s) {
    rule.stale_after_ns =
        static_cast<std::int64_t>(std::llround(*alarm.stale_after_s * kNanosPerSecond));
  }
  if (Status valid = rule.Validate(); !valid.ok()) return Error{valid.message()};
  return rule;
}

SensorHealthOptions SensorOptionsFrom(const config::SensorChecksConfig& checks) {
  SensorHealthOptions options;
  options.full_scale = checks.full_scale;
  options.clip_count_limit = checks.clip_count;
  options.noise_floor_rms = checks.noise_floor_rms;
  options.identical_run_limit = checks.identical_run;
  if (checks.mean_window)
    options.mean_window = ValueWindow{checks.mean_window->low, checks.mean_window->high};
  options.max_sequence_gaps = checks.max_sequence_gaps;
  return options;
}

}  // namespace

Result<std::vector<PointJudgement>> JudgementsFromSite(const config::SiteConfig& site) {
  return JudgementsFromSite(site, {});
}

Result<std::vector<PointJudgement>> JudgementsFromSite(
    const config::SiteConfig& site, const std::vector<LearnedBaseline>& learned) {
  auto find_learned = [&](const std::string& point, const std::string& measure) {
    const LearnedBaseline* found = nullptr;
    for (const auto& baseline : learned) {
      if (baseline.point == point && baseline.measure == measure) found = &baseline;
    }
    return found;
  };
  std::vector<PointJudgement> judgements;
  judgements.reserve(site.points.size());
  for (const auto& point : site.points) {
    PointJudgement judgement;
    judgement.point_id = point.id;
    judgement.sensor = SensorOptionsFrom(point.sensor_checks);
    if (Status valid = judgement.sensor.Validate(); !valid.ok()) {
      return Error{"point " + point.id + ": " + valid.message()};
    }
    for (const auto& alarm : point.alarms) {
      auto rule = RuleFrom(site, point, alarm, find_learned(point.id, alarm.measure));
      if (!rule.ok()) return Error{rule.message()};
      judgement.rules.push_back(*std::move(rule));
    }
    for (const auto& baseline : learned) {
      if (baseline.point != point.id) continue;
      bool configured = false;
      for (const auto& alarm : point.alarms)
        configured = configured || alarm.measure == baseline.measure;
      if (configured || !MeasureUnit(point, baseline.measure).ok()) continue;
      config::AlarmLimitConfig alarm;
      alarm.measure = baseline.measure;
      alarm.alert = baseline.alert;
      alarm.danger = baseline.danger;
      auto rule = RuleFrom(site, point, alarm, nullptr);
      if (!rule.ok()) continue;  // e.g. limits not above one another: no learned alarm
      judgement.rules.push_back(*std::move(rule));
    }
    judgements.push_back(std::move(judgement));
  }
  return judgements;
}

storage::StoreOptions StoreOptionsFromSite(const config::SiteConfig& site) {
  storage::StoreOptions options;
  options.synchronous_full = site.storage.durability == config::Durability::kFull;
  options.spectrum_spacing_ns =
      static_cast<std::int64_t>(std::llround(site.storage.spectrum_every_s * kNanosPerSecond));
  options.retention.raw_days = site.storage.retention.raw_days;
  options.retention.hourly_days = site.storage.retention.hourly_days;
  options.retention.daily_days = site.storage.retention.daily_days;
  options.retention.spectrum_days = site.storage.retention.spectrum_days;
  return options;
}

}  // namespace spinward::daemon

namespace spinward::daemon {

Result<std::vector<LearnedBaseline>> ReadLearnedBaselines(const std::string& path) {
  auto store = storage::BaselineStore::Open(path);
  if (!store.ok()) return Error{store.message()};
  auto rows = store->Rows("");
  if (!rows.ok()) return Error{rows.message()};
  std::vector<LearnedBaseline> learned;
  for (const auto& row : *rows) {
    if (!row.learned_ns || !row.median || !row.alert || !row.danger) continue;
    learned.push_back({row.point, row.measure, *row.median, *row.alert, *row.danger});
  }
  return learned;
}

}  // namespace spinward::daemon
