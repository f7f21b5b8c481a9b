#include "spinward/config/site_loader.h"

#include <arpa/inet.h>
#include <yaml-cpp/depthguard.h>
#include <yaml-cpp/yaml.h>

#include <array>
#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <fstream>
#include <limits>
#include <map>
#include <sstream>
#include <utility>

#include "diagnostics_loader.h"
#include "spinward/config/nearest_key.h"
#include "spinward/config/point_options.h"
#include "yaml_map_reader.h"

namespace spinward::config {
namespace {

using internal::MapReader;
using internal::Need;
using internal::ProblemList;
using internal::QuoteValue;

constexpr std::array<std::string_view, 10> kTopKeys{
    "site",           "machines", "profiles", "points", "listeners",
    "drop_directory", "storage",  "logging",  "health", "messaging"};
constexpr std::array<std::string_view, 1> kSiteKeys{"name"};
// The last keys of machines and points are the machine-aware ones (diagnostics_loader.h).
constexpr std::array<std::string_view, 10> kMachineKeys{
    "id",      "name",    "kind",  "speed_rpm",    "iso_group",
    "support", "bearing", "vanes", "speed_source", "speed_search_percent"};
constexpr std::array<std::string_view, 9> kProfileKeys{
    "id",      "segment",   "overlap",    "fft_length",     "window",
    "detrend", "averaging", "interval_s", "time_constant_s"};
constexpr std::array<std::string_view, 15> kPointKeys{
    "id",          "machine",       "location",       "direction",   "sensor",
    "sensitivity", "units",         "sample_rate_hz", "profile",     "bands",
    "alarms",      "sensor_checks", "tachometer",     "order_bands", "envelope"};
constexpr std::array<std::string_view, 5> kBandKeys{"name", "lo_hz", "hi_hz", "quantity", "units"};
constexpr std::array<std::string_view, 7> kListenerKeys{
    "type",           "address",         "port",         "max_connections",
    "idle_timeout_s", "max_frame_bytes", "allowed_peers"};
constexpr std::array<std::string_view, 3> kDropKeys{"path", "poll_interval_s", "files"};
constexpr std::array<std::string_view, 4> kDropFileKeys{"pattern", "point", "format",
                                                        "sample_rate_hz"};
constexpr std::array<std::string_view, 12> kAlarmKeys{
    "measure",  "alert",     "danger",   "low_alert",     "low_danger", "deadband",
    "on_delay", "off_delay", "latching", "stale_after_s", "preset",     "baseline"};
constexpr std::array<std::string_view, 6> kSensorCheckKeys{"full_scale",      "clip_count",
                                                           "noise_floor_rms", "identical_run",
                                                           "mean_window",     "max_sequence_gaps"};
constexpr std::array<std::string_view, 4> kStorageKeys{"path", "retention", "spectrum_every_s",
                                                       "durability"};
constexpr std::array<std::string_view, 4> kRetentionKeys{"raw_days", "hourly_days", "daily_days",
                                                         "spectrum_days"};
// Seconds that still fit in int64 nanoseconds with room to spare (kMaxRetentionDays' bound).
constexpr double kMaxSeconds = 86400.0 * kMaxRetentionDays;
constexpr std::array<std::string_view, 2> kLoggingKeys{"level", "file"};
constexpr std::array<std::string_view, 3> kHealthKeys{"enabled", "address", "port"};
constexpr std::array<std::string_view, 14> kMessagingKeys{"host",
                                                          "port",
                                                          "client_id",
                                                          "protocol",
                                                          "topic_prefix",
                                                          "keepalive_s",
                                                          "username",
                                                          "password_file",
                                                          "tls",
                                                          "reconnect_min_s",
                                                          "reconnect_max_s",
                                                          "sent_retention_h",
                                                          "band_values",
                                                          "command_hook"};
constexpr std::array<std::string_view, 3> kTlsKeys{"ca_file", "cert_file", "key_file"};
constexpr std::array<std::string_view, 3> kBandValueKeys{"enabled", "every_intervals", "qos"};
constexpr std::array<std::string_view, 3> kHookKeys{"program", "args", "timeout_s"};

std::string Indexed(std::string_view list, std::size_t index) {
  return std::string(list) + "[" + std::to_string(index) + "]";
}

std::string FormatNumber(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

bool IsNumericAddress(const std::string& text) {
  unsigned char buffer[16];
  return ::inet_pton(AF_INET, text.c_str(), buffer) == 1 ||
         ::inet_pton(AF_INET6, text.c_str(), buffer) == 1;
}

// The leading identifier of an estimator message ("overlap 4096 must be ..." -> "overlap"): the
// estimators name the bad field first.
std::string LeadingField(std::string_view message) {
  std::size_t end = 0;
  while (end < message.size() &&
         (std::isalnum(static_cast<unsigned char>(message[end])) || message[end] == '_')) {
    ++end;
  }
  return std::string(message.substr(0, end));
}

// Where a profile's keys sit, so a problem found while checking a point lands on the profile's key.
struct ProfilePlace {
  std::string path;
  YAML::Mark mark;
  std::map<std::string, YAML::Mark, std::less<>> key_marks;
  bool checked_ok = true;  // false once one of its own checks failed: skip the estimator's Validate
};

class SiteLoader {
 public:
  explicit SiteLoader(std::string file) : problems_(std::move(file)) {}

  LoadedSite Load(std::string_view text) {
    YAML::Node root;
    try {
      root = YAML::Load(std::string(text));
    } catch (const YAML::DeepRecursion& error) {
      // yaml-cpp's own message for this one is unhelpful ("bad file").
      problems_.Add(error.mark, "", "YAML syntax error: nesting too deep");
      return Finish();
    } catch (const YAML::Exception& error) {
      problems_.Add(error.mark, "", "YAML syntax error: " + error.msg);
      return Finish();
    }
    try {
      ReadRoot(root);
    } catch (const YAML::Exception& error) {
      // Not expected: every access above checks the node type first. Kept so no yaml-cpp
      // exception ever leaves config/.
      problems_.Add(error.mark, "", "could not read the document: " + error.msg);
    }
    return Finish();
  }

  void AddFileProblem(std::string problem) {
    problems_.Add(YAML::Mark::null_mark(), "", std::move(problem));
  }
  LoadedSite Finish() { return LoadedSite{std::move(site_), problems_.Take()}; }

 private:
  void ReadRoot(const YAML::Node& root) {
    if (root.IsNull()) {
      problems_.Add(YAML::Mark(), "",
                    "the file holds no settings; a site needs site, machines, profiles and points");
      return;
    }
    MapReader top(problems_, root, "", kTopKeys);
    if (!top.is_map()) return;
    top.Require("site");
    if (const YAML::Node* node = top.Find("site")) {
      MapReader site(problems_, *node, "site", kSiteKeys);
      site.ReadString("name", site_.site.name, Need::kRequired);
    }
    ReadMachines(top);
    ReadProfiles(top);
    ReadPoints(top);
    CheckTachometers(top);
    ReadListeners(top);
    ReadDropDirectory(top);
    ReadStorage(top);
    if (const YAML::Node* node = top.Find("logging")) {
      MapReader logging(problems_, *node, "logging", kLoggingKeys);
      logging.ReadParsed("level", site_.logging.level, Need::kOptional, ParseLogLevel);
      logging.ReadString("file", site_.logging.file, Need::kOptional);
    }
    ReadHealth(top);
    ReadMessaging(top);
    if (top.Find("listeners") == nullptr && top.Find("drop_directory") == nullptr) {
      problems_.Add(top.mark(), "listeners",
                    "no sample source: give listeners, a drop_directory or both");
    }
  }

  // A machine whose speed comes from a tachometer needs exactly one point that carries its pulses.
  void CheckTachometers(MapReader& top) {
    for (std::size_t i = 0; i < site_.machines.size(); ++i) {
      const MachineConfig& machine = site_.machines[i];
      if (machine.diagnostics.speed_source != SpeedSourceKind::kTachometer) continue;
      std::size_t count = 0;
      for (const auto& point : site_.points) {
        count += point.machine == machine.id && point.diagnostics.tachometer ? 1 : 0;
      }
      if (count != 1) {
        problems_.Add(top.ValueMark("machines"), Indexed("machines", i) + ".speed_source",
                      "machine " + QuoteValue(machine.id) +
                          " takes its speed from a tachometer "
                          "but " +
                          std::to_string(count) +
                          " of its points have tachometer: true; exactly one must");
      }
    }
  }

  // Reports an id seen before in the same list. Returns true when the id is new.
  bool CheckUnique(std::map<std::string, int, std::less<>>& seen, MapReader& entry,
                   std::string_view key, const std::string& id, std::string_view what) {
    int line = entry.ValueMark(key).line + 1;
    auto [it, inserted] = seen.emplace(id, line);
    if (inserted) return true;
    entry.Report(key, "duplicate " + std::string(what) + " " + QuoteValue(id) + " (first at line " +
                          std::to_string(it->second) + ")");
    return false;
  }

  std::vector<YAML::Node> ReadNonEmptyList(MapReader& top, std::string_view key) {
    auto items = top.ReadList(key, Need::kRequired);
    const YAML::Node* node = top.Find(key);
    if (items.empty() && node != nullptr && node->IsSequence()) {
      top.Report(key, "the list is empty; the site needs at least one entry");
    }
    return items;
  }

  void ReadMachines(MapReader& top) {
    std::map<std::string, int, std::less<>> seen;
    auto items = ReadNonEmptyList(top, "machines");
    for (std::size_t i = 0; i < items.size(); ++i) {
      MapReader entry(problems_, items[i], Indexed("machines", i), kMachineKeys);
      if (!entry.is_map()) continue;
      MachineConfig machine;
      if (entry.ReadString("id", machine.id, Need::kRequired)) {
        CheckUnique(seen, entry, "id", machine.id, "machine id");
      }
      entry.ReadString("name", machine.name, Need::kOptional);
      entry.ReadParsed("kind", machine.kind, Need::kOptional, ParseMachineKind);
      if (entry.ReadNumber("speed_rpm", machine.speed_rpm, Need::kRequired) &&
          machine.speed_rpm <= 0.0) {
        entry.Report("speed_rpm", "must be above 0, got " + FormatNumber(machine.speed_rpm));
      }
      long long group = machine.iso_group;
      if (entry.ReadInteger("iso_group", group, Need::kOptional)) {
        if (group != 1 && group != 2) {
          entry.Report("iso_group",
                       "must be 1 or 2 (ISO 10816-3 machine group), got " + std::to_string(group));
        } else {
          machine.iso_group = static_cast<int>(group);
        }
      }
      entry.ReadParsed("support", machine.support, Need::kOptional, ParseMachineSupport);
      internal::ReadMachineDiagnostics(problems_, entry, machine);
      site_.machines.push_back(std::move(machine));
    }
  }

  void ReadProfiles(MapReader& top) {
    std::map<std::string, int, std::less<>> seen;
    auto items = ReadNonEmptyList(top, "profiles");
    for (std::size_t i = 0; i < items.size(); ++i) {
      MapReader entry(problems_, items[i], Indexed("profiles", i), kProfileKeys);
      ProfilePlace place{entry.path(), entry.mark(), {}, true};
      if (!entry.is_map()) continue;
      for (auto key : kProfileKeys) place.key_marks.emplace(std::string(key), entry.ValueMark(key));
      ProfileConfig profile;
      auto fail = [&](std::string_view key, std::string problem) {
        entry.Report(key, std::move(problem));
        place.checked_ok = false;
      };
      if (entry.ReadString("id", profile.id, Need::kRequired)) {
        CheckUnique(seen, entry, "id", profile.id, "profile id");
      }
      bool segment_ok = !entry.Has("segment") ||
                        entry.ReadCount("segment", profile.segment_length, Need::kOptional);
      if (segment_ok && profile.segment_length < 2) {
        fail("segment",
             "must be at least 2 samples, got " + std::to_string(profile.segment_length));
        segment_ok = false;
      }
      if (!segment_ok) place.checked_ok = false;
      profile.overlap = profile.segment_length / 2;  // SciPy's default, floor(L / 2)
      if (segment_ok) ReadOverlap(entry, profile, fail);
      if (entry.ReadCount("fft_length", profile.fft_length, Need::kOptional) && segment_ok &&
          profile.fft_length < profile.segment_length) {
        fail("fft_length", "fft_length " + std::to_string(profile.fft_length) +
                               " must not be less than segment " +
                               std::to_string(profile.segment_length));
      }
      // A text the estimators reject leaves the default in place: skip their Validate for it.
      if (!entry.ReadParsed("window", profile.window, Need::kOptional,
                            estimators::ParseWindowSpec) &&
          entry.Has("window")) {
        place.checked_ok = false;
      }
      if (!entry.ReadParsed("detrend", profile.detrend, Need::kOptional,
                            estimators::ParseDetrend) &&
          entry.Has("detrend")) {
        place.checked_ok = false;
      }
      if (!entry.ReadParsed("averaging", profile.averaging, Need::kOptional,
                            estimators::ParseAveraging) &&
          entry.Has("averaging")) {
        place.checked_ok = false;
      }
      if (entry.ReadNumber("interval_s", profile.interval_s, Need::kOptional) &&
          profile.interval_s <= 0.0) {
        fail("interval_s", "must be above 0 seconds, got " + FormatNumber(profile.interval_s));
      }
      if (entry.ReadNumber("time_constant_s", profile.time_constant_s, Need::kOptional)) {
        if (profile.time_constant_s <= 0.0) {
          fail("time_constant_s",
               "must be above 0 seconds, got " + FormatNumber(profile.time_constant_s));
        } else if (profile.averaging != estimators::Averaging::kExponential) {
          fail("time_constant_s", "applies to exponential averaging only (averaging is " +
                                      std::string(estimators::ToString(profile.averaging)) + ")");
        }
      }
      profile_places_.emplace(profile.id, std::move(place));
      site_.profiles.push_back(std::move(profile));
    }
  }

  // The overlap is a number of samples or a percentage of the segment ("50%").
  template <typename Fail>
  void ReadOverlap(MapReader& entry, ProfileConfig& profile, Fail& fail) {
    const YAML::Node* node = entry.Find("overlap");
    if (node == nullptr) return;
    const std::string kExpected = "expected a number of samples or a percentage like \"50%\", got ";
    if (!node->IsScalar()) {
      fail("overlap", kExpected + std::string(internal::DescribeNodeType(*node)));
      return;
    }
    const std::string& text = node->Scalar();
    if (!text.empty() && text.back() == '%') {
      auto percent = internal::ParseFiniteNumber(std::string_view(text).substr(0, text.size() - 1));
      if (!percent) {
        fail("overlap", kExpected + QuoteValue(text));
        return;
      }
      auto samples = estimators::OverlapFromPercent(profile.segment_length, *percent);
      if (!samples.ok()) {
        fail("overlap", samples.message());
        return;
      }
      profile.overlap = *samples;
    } else {
      auto samples = internal::ParseWholeNumber(text);
      if (!samples) {
        fail("overlap", kExpected + QuoteValue(text));
        return;
      }
      if (*samples < 0) {
        fail("overlap", "must not be negative, got " + std::to_string(*samples));
        return;
      }
      profile.overlap = static_cast<std::size_t>(*samples);
    }
    if (profile.overlap >= profile.segment_length) {
      fail("overlap", "overlap " + std::to_string(profile.overlap) +
                          " samples must be less than segment " +
                          std::to_string(profile.segment_length));
    }
  }

  void ReadPoints(MapReader& top) {
    std::map<std::string, int, std::less<>> seen_ids;
    std::map<std::string, int, std::less<>> seen_sensors;
    std::vector<std::string> machine_ids;
    std::vector<std::string> profile_ids;
    for (const auto& machine : site_.machines) machine_ids.push_back(machine.id);
    for (const auto& profile : site_.profiles) profile_ids.push_back(profile.id);

    auto items = ReadNonEmptyList(top, "points");
    for (std::size_t i = 0; i < items.size(); ++i) {
      MapReader entry(problems_, items[i], Indexed("points", i), kPointKeys);
      if (!entry.is_map()) continue;
      PointConfig point;
      if (entry.ReadString("id", point.id, Need::kRequired)) {
        CheckUnique(seen_ids, entry, "id", point.id, "point id");
      }
      if (entry.ReadString("machine", point.machine, Need::kRequired) &&
          site_.FindMachine(point.machine) == nullptr) {
        entry.Report("machine", UnknownReference("machine", point.machine, machine_ids));
      }
      entry.ReadString("location", point.location, Need::kOptional);
      entry.ReadParsed("direction", point.direction, Need::kOptional, ParseDirection);
      if (entry.ReadString("sensor", point.sensor, Need::kRequired)) {
        CheckUnique(seen_sensors, entry, "sensor", point.sensor, "sensor id");
      }
      ReadSensorUnits(entry, point);
      bool rate_ok = entry.ReadNumber("sample_rate_hz", point.sample_rate_hz, Need::kRequired);
      if (rate_ok && point.sample_rate_hz <= 0.0) {
        entry.Report("sample_rate_hz",
                     "must be above 0 Hz, got " + FormatNumber(point.sample_rate_hz));
        rate_ok = false;
      }
      if (entry.ReadString("profile", point.profile, Need::kRequired)) {
        if (site_.FindProfile(point.profile) == nullptr) {
          entry.Report("profile", UnknownReference("profile", point.profile, profile_ids));
        } else if (rate_ok) {
          CheckProfileAtRate(entry, point);
        }
      }
      ReadBands(entry, point, rate_ok);
      internal::ReadPointDiagnostics(problems_, entry, point, site_.FindMachine(point.machine),
                                     rate_ok);
      ReadAlarms(entry, point);
      ReadSensorChecks(entry, point);
      site_.points.push_back(std::move(point));
    }
  }

  static std::string UnknownReference(std::string_view what, const std::string& id,
                                      const std::vector<std::string>& known) {
    std::string problem = "no " + std::string(what) + " has id " + QuoteValue(id);
    if (auto nearest = NearestKey(id, known)) problem += "; did you mean '" + *nearest + "'?";
    return problem;
  }

  void ReadSensorUnits(MapReader& entry, PointConfig& point) {
    estimators::Sensitivity sensitivity;
    bool has_sensitivity = entry.ReadParsed("sensitivity", sensitivity, Need::kOptional,
                                            estimators::Sensitivity::Parse);
    if (has_sensitivity) {
      if (estimators::QuantityOf(sensitivity.unit) != estimators::Quantity::kAcceleration) {
        entry.Report("sensitivity", "must be per acceleration unit (g or m/s^2), got " +
                                        std::string(estimators::ToString(sensitivity.unit)));
      }
      point.sensitivity = sensitivity;
      point.unit = sensitivity.unit;
    }
    estimators::Unit unit = point.unit;
    if (!entry.ReadParsed("units", unit, Need::kOptional, estimators::ParseUnit)) return;
    if (estimators::QuantityOf(unit) != estimators::Quantity::kAcceleration) {
      entry.Report("units", "the samples must be acceleration (g or m/s^2), got " +
                                std::string(estimators::ToString(unit)));
      return;
    }
    if (has_sensitivity && unit != sensitivity.unit) {
      entry.Report("units", "units " + std::string(estimators::ToString(unit)) +
                                " disagree with the sensitivity, which gives " +
                                std::string(estimators::ToString(sensitivity.unit)));
      return;
    }
    point.unit = unit;
  }

  // The profile's settings at this point's rate: the averaging interval must make at least one
  // segment, and the estimator's own Validate must accept them.
  void CheckProfileAtRate(MapReader& entry, const PointConfig& point) {
    const ProfileConfig& profile = *site_.FindProfile(point.profile);
    auto place = profile_places_.find(profile.id);
    if (place == profile_places_.end() || !place->second.checked_ok) return;
    estimators::WelchOptions options = ProfileWelchOptions(profile, point.sample_rate_hz);
    if (options.segments_per_average == 0) {
      double hop_s = static_cast<double>(options.Hop()) / point.sample_rate_hz;
      entry.Report("profile", "profile " + QuoteValue(profile.id) + " has interval_s " +
                                  FormatNumber(profile.interval_s) +
                                  ", less than half a segment hop (" + FormatNumber(hop_s) +
                                  " s at " + FormatNumber(point.sample_rate_hz) +
                                  " Hz): no average would complete");
      return;
    }
    Status valid = options.Validate();
    if (valid.ok()) return;
    static const std::map<std::string, std::string, std::less<>> kFieldToKey{
        {"segment_length", "segment"},
        {"overlap", "overlap"},
        {"fft_length", "fft_length"},
        {"window", "window"},
        {"kaiser_beta", "window"},
        {"detrend", "detrend"},
        {"averaging", "averaging"},
        {"segments_per_average", "interval_s"},
        {"exponential_time_constant_s", "time_constant_s"}};
    std::string field = LeadingField(valid.message());
    if (field == "sample_rate_hz") {
      entry.Report("sample_rate_hz", valid.message());
      return;
    }
    auto key = kFieldToKey.find(field);
    if (key == kFieldToKey.end()) {
      problems_.Add(place->second.mark, place->second.path, valid.message());
      return;
    }
    auto mark = place->second.key_marks.find(key->second);
    problems_.Add(mark != place->second.key_marks.end() ? mark->second : place->second.mark,
                  place->second.path + "." + key->second, valid.message());
  }

  void ReadBands(MapReader& point_entry, PointConfig& point, bool rate_ok) {
    std::map<std::string, int, std::less<>> seen_names;
    auto items = point_entry.ReadList("bands", Need::kOptional);
    for (std::size_t k = 0; k < items.size(); ++k) {
      MapReader entry(problems_, items[k], point_entry.KeyPath(Indexed("bands", k)), kBandKeys);
      if (!entry.is_map()) continue;
      estimators::BandSpec band;
      if (entry.ReadString("name", band.name, Need::kRequired)) {
        if (FindOverallMeasure(band.name) != nullptr) {
          // Alarms and trends name a measure by band name or indicator name: they must differ.
          entry.Report("name", "band name " + QuoteValue(band.name) +
                                   " is the name of an overall indicator; choose another");
        } else {
          CheckUnique(seen_names, entry, "name", band.name, "band name");
        }
      }
      bool lo_ok = entry.ReadNumber("lo_hz", band.lo_hz, Need::kRequired);
      bool hi_ok = entry.ReadNumber("hi_hz", band.hi_hz, Need::kRequired);
      bool checks_ok = lo_ok && hi_ok;
      if (lo_ok && band.lo_hz < 0.0) {
        entry.Report("lo_hz", "must not be negative, got " + FormatNumber(band.lo_hz));
        checks_ok = false;
      }
      if (lo_ok && hi_ok && band.lo_hz >= band.hi_hz) {
        entry.Report("hi_hz", "hi_hz " + FormatNumber(band.hi_hz) + " must be above lo_hz " +
                                  FormatNumber(band.lo_hz));
        checks_ok = false;
      }
      if (hi_ok && rate_ok && band.hi_hz > point.sample_rate_hz / 2.0) {
        entry.Report("hi_hz",
                     "hi_hz " + FormatNumber(band.hi_hz) + " is above the Nyquist frequency " +
                         FormatNumber(point.sample_rate_hz / 2.0) + " Hz (sample_rate_hz " +
                         FormatNumber(point.sample_rate_hz) + " / 2)");
        checks_ok = false;
      }
      estimators::Quantity quantity = estimators::Quantity::kVelocity;
      if (!entry.ReadParsed("quantity", quantity, Need::kOptional, estimators::ParseQuantity) &&
          entry.Has("quantity")) {
        checks_ok = false;
      }
      band.unit = estimators::DefaultUnit(quantity);
      estimators::Unit unit = band.unit;
      if (entry.ReadParsed("units", unit, Need::kOptional, estimators::ParseUnit)) {
        if (estimators::QuantityOf(unit) != quantity) {
          entry.Report("units",
                       "units " + std::string(estimators::ToString(unit)) + " measure " +
                           std::string(estimators::ToString(estimators::QuantityOf(unit))) +
                           ", not " + std::string(estimators::ToString(quantity)));
          checks_ok = false;
        } else {
          band.unit = unit;
        }
      } else if (entry.Has("units")) {
        checks_ok = false;
      }
      if (checks_ok && rate_ok) {
        Status valid = band.Validate(point.sample_rate_hz);
        if (!valid.ok()) {
          // The band's messages open with the band's label, then name the field.
          const std::string& message = valid.message();
          std::string key = message.find("hi_hz") != std::string::npos   ? "hi_hz"
                            : message.find("lo_hz") != std::string::npos ? "lo_hz"
                            : message.find("unit") != std::string::npos  ? "units"
                                                                         : "";
          if (key.empty()) {
            problems_.Add(entry.mark(), entry.path(), valid.message());
          } else {
            entry.Report(key, valid.message());
          }
        }
      }
      point.bands.push_back(std::move(band));
    }
  }

  // An optional number that must pass `check` (which returns the problem, or empty).
  template <typename Check>
  bool ReadCheckedNumber(MapReader& entry, std::string_view key, std::optional<double>& out,
                         Check check) {
    double value = 0.0;
    if (!entry.ReadNumber(key, value, Need::kOptional)) return false;
    if (std::string problem = check(value); !problem.empty()) {
      entry.Report(key, std::move(problem));
      return false;
    }
    out = value;
    return true;
  }

  static std::string AnyNumber(double) { return {}; }

  void ReadAlarms(MapReader& point_entry, PointConfig& point) {
    std::vector<std::string> known;
    for (const auto& band : point.bands) {
      if (!band.name.empty()) known.push_back(band.name);
    }
    for (const auto& overall : kOverallMeasures) known.emplace_back(overall.name);
    for (const auto& name : DiagnosticMeasureNames(point)) known.push_back(name);
    std::map<std::string, int, std::less<>> seen;
    auto items = point_entry.ReadList("alarms", Need::kOptional);
    for (std::size_t k = 0; k < items.size(); ++k) {
      MapReader entry(problems_, items[k], point_entry.KeyPath(Indexed("alarms", k)), kAlarmKeys);
      if (!entry.is_map()) continue;
      AlarmLimitConfig alarm;
      const estimators::BandSpec* band = nullptr;
      const OverallMeasure* overall = nullptr;
      bool diagnostic = false;  // speed, an order band or an envelope measure
      if (entry.ReadString("measure", alarm.measure, Need::kRequired)) {
        for (const auto& candidate : point.bands) {
          if (candidate.name == alarm.measure) band = &candidate;
        }
        overall = FindOverallMeasure(alarm.measure);
        diagnostic = DiagnosticMeasureUnit(point, alarm.measure).has_value();
        if (band == nullptr && overall == nullptr && !diagnostic) {
          entry.Report("measure", UnknownMeasure(alarm.measure, known));
        } else {
          CheckUnique(seen, entry, "measure", alarm.measure, "alarm on measure");
        }
      }
      bool preset_ok = entry.ReadParsed("preset", alarm.preset, Need::kOptional, ParseAlarmPreset);
      bool limits_ok = ReadCheckedNumber(entry, "alert", alarm.alert, AnyNumber);
      limits_ok = ReadCheckedNumber(entry, "danger", alarm.danger, AnyNumber) && limits_ok;
      ReadCheckedNumber(entry, "low_alert", alarm.low_alert, AnyNumber);
      ReadCheckedNumber(entry, "low_danger", alarm.low_danger, AnyNumber);
      ReadCheckedNumber(entry, "baseline", alarm.baseline, [](double value) {
        return value < 0.0 ? "must be 0 mm/s or more, got " + FormatNumber(value) : std::string();
      });
      ReadCheckedNumber(entry, "stale_after_s", alarm.stale_after_s, [](double value) {
        if (value <= 0.0) return "must be above 0 seconds, got " + FormatNumber(value);
        if (value > kMaxSeconds) {
          return "must be at most " + FormatNumber(kMaxSeconds) + " seconds, got " +
                 FormatNumber(value);
        }
        return std::string();
      });

      if (alarm.preset == AlarmPreset::kIso10816_3) {
        if (diagnostic) {
          entry.Report("preset", "preset 'iso10816-3' judges a broad-band velocity band in mm/s; " +
                                     QuoteValue(alarm.measure) + " is a machine-aware measure");
        } else {
          CheckPreset(entry, point, band, overall);
        }
      } else if (preset_ok || !entry.Has("preset")) {
        for (const char* key : {"alert", "danger"}) {
          if (!entry.Has(key)) {
            problems_.Add(entry.mark(), entry.KeyPath(key),
                          "required key is missing: give alert and danger, or preset: "
                          "iso10816-3 on a velocity band in mm/s");
          }
        }
        if (entry.Has("baseline")) {
          entry.Report("baseline",
                       "applies only with preset: iso10816-3 (the standard's baseline rule)");
        }
        if (limits_ok && alarm.alert && alarm.danger && *alarm.alert >= *alarm.danger) {
          entry.Report("danger", "danger " + FormatNumber(*alarm.danger) + " must be above alert " +
                                     FormatNumber(*alarm.alert));
          limits_ok = false;
        }
      }
      bool lows_ok = true;
      if (alarm.low_alert && alarm.low_danger && *alarm.low_danger >= *alarm.low_alert) {
        entry.Report("low_danger", "low_danger " + FormatNumber(*alarm.low_danger) +
                                       " must be below low_alert " +
                                       FormatNumber(*alarm.low_alert));
        lows_ok = false;
      }
      std::optional<double> lowest = alarm.low_alert ? alarm.low_alert : alarm.low_danger;
      const char* low_key = alarm.low_alert ? "low_alert" : "low_danger";
      if (lows_ok && lowest && alarm.alert && *lowest >= *alarm.alert) {
        entry.Report(low_key, std::string(low_key) + " " + FormatNumber(*lowest) +
                                  " must be below alert " + FormatNumber(*alarm.alert));
        lows_ok = false;
      }
      bool deadband_ok =
          entry.ReadParsed("deadband", alarm.deadband, Need::kOptional, ParseDeadband);
      if ((deadband_ok || !entry.Has("deadband")) && limits_ok && lows_ok && lowest &&
          alarm.alert) {
        // The reset bands of the low and the high limits must not meet, or a value could hold
        // both alarms at once.
        double low_reset = *lowest + DeadbandWidth(alarm.deadband, *lowest);
        double high_reset = *alarm.alert - DeadbandWidth(alarm.deadband, *alarm.alert);
        if (low_reset >= high_reset) {
          entry.Report(entry.Has("deadband") ? "deadband" : low_key,
                       "the deadband makes the reset level of " + std::string(low_key) + " (" +
                           FormatNumber(low_reset) + ") reach that of alert (" +
                           FormatNumber(high_reset) + ")");
        }
      }
      entry.ReadParsed("on_delay", alarm.on_delay, Need::kOptional, ParseOnDelay);
      long long off_delay = alarm.off_delay;
      if (entry.ReadInteger("off_delay", off_delay, Need::kOptional)) {
        if (off_delay < 1 || off_delay > std::numeric_limits<int>::max()) {
          entry.Report("off_delay", "must be at least 1 interval (1 clears at once), got " +
                                        std::to_string(off_delay));
        } else {
          alarm.off_delay = static_cast<int>(off_delay);
        }
      }
      entry.ReadBool("latching", alarm.latching, Need::kOptional);
      point.alarms.push_back(std::move(alarm));
    }
  }

  static double DeadbandWidth(const Deadband& deadband, double setpoint) {
    return deadband.kind == DeadbandKind::kAbsolute ? deadband.value
                                                    : std::fabs(setpoint) * deadband.value / 100.0;
  }

  static std::string UnknownMeasure(const std::string& measure,
                                    const std::vector<std::string>& known) {
    std::string problem = "unknown measure " + QuoteValue(measure);
    if (auto nearest = NearestKey(measure, known)) problem += "; did you mean '" + *nearest + "'?";
    problem += " (known: ";
    for (std::size_t i = 0; i < known.size(); ++i) problem += (i ? ", " : "") + known[i];
    return problem + ")";
  }

  // The ISO 10816-3 preset judges broad-band RMS velocity in mm/s and takes its limits from the
  // machine's class: the limits may not be written as well.
  void CheckPreset(MapReader& entry, const PointConfig& point, const estimators::BandSpec* band,
                   const OverallMeasure* overall) {
    for (const char* key : {"alert", "danger"}) {
      if (entry.Has(key)) {
        entry.Report(key, std::string(key) +
                              " is set by preset 'iso10816-3' from the machine's ISO group and "
                              "support; give either the preset or your own alert and danger");
      }
    }
    const std::string kNeeds = "preset 'iso10816-3' judges a velocity band in mm/s; ";
    if (overall != nullptr) {
      entry.Report("preset", kNeeds + QuoteValue(overall->name) + " is an overall indicator" +
                                 (overall->dimensionless
                                      ? std::string(" (a ratio)")
                                      : " in " + std::string(estimators::ToString(point.unit))));
    } else if (band != nullptr && band->unit != estimators::Unit::kMillimetresPerSecond) {
      estimators::Quantity quantity = estimators::QuantityOf(band->unit);
      std::string unit(estimators::ToString(band->unit));
      if (quantity != estimators::Quantity::kVelocity) {
        entry.Report("preset", kNeeds + "band " + QuoteValue(band->name) + " measures " +
                                   std::string(estimators::ToString(quantity)) + " in " + unit);
      } else {
        entry.Report("preset", kNeeds + "band " + QuoteValue(band->name) + " is in " + unit +
                                   "; give the band units: mm/s");
      }
    }
  }

  void ReadSensorChecks(MapReader& point_entry, PointConfig& point) {
    const YAML::Node* node = point_entry.Find("sensor_checks");
    if (node == nullptr) return;
    MapReader entry(problems_, *node, point_entry.KeyPath("sensor_checks"), kSensorCheckKeys);
    if (!entry.is_map()) return;
    SensorChecksConfig& checks = point.sensor_checks;
    const std::string unit(estimators::ToString(point.unit));
    ReadCheckedNumber(entry, "full_scale", checks.full_scale, [&](double value) {
      return value <= 0.0 ? "must be above 0 " + unit + ", got " + FormatNumber(value)
                          : std::string();
    });
    std::size_t clip_count = 0;
    if (entry.ReadCount("clip_count", clip_count, Need::kOptional)) {
      if (clip_count < 1) {
        entry.Report("clip_count", "must be at least 1 sample, got 0");
      } else if (!entry.Has("full_scale")) {
        entry.Report("clip_count",
                     "has no effect without full_scale (clipping is counted "
                     "against the full scale)");
      } else {
        checks.clip_count = clip_count;
      }
    }
    ReadCheckedNumber(entry, "noise_floor_rms", checks.noise_floor_rms, [&](double value) {
      if (value < 0.0) return "must be 0 " + unit + " or more, got " + FormatNumber(value);
      if (checks.full_scale && value >= *checks.full_scale) {
        return "noise_floor_rms " + FormatNumber(value) + " must be below full_scale " +
               FormatNumber(*checks.full_scale);
      }
      return std::string();
    });
    std::size_t run = 0;
    if (entry.ReadCount("identical_run", run, Need::kOptional)) {
      if (run < 2) {
        entry.Report("identical_run", "must be at least 2 samples, got " + std::to_string(run));
      } else {
        checks.identical_run = run;
      }
    }
    ReadMeanWindow(entry, checks);
    entry.ReadCount("max_sequence_gaps", checks.max_sequence_gaps, Need::kOptional);
  }

  void ReadMeanWindow(MapReader& entry, SensorChecksConfig& checks) {
    const YAML::Node* node = entry.Find("mean_window");
    if (node == nullptr) return;
    const std::string kExpected = "expected a list of two numbers [low, high], got ";
    if (!node->IsSequence() || node->size() != 2) {
      entry.Report(
          "mean_window",
          kExpected + (node->IsSequence() ? std::to_string(node->size()) + " items"
                                          : std::string(internal::DescribeNodeType(*node))));
      return;
    }
    double bounds[2] = {0.0, 0.0};
    for (std::size_t i = 0; i < 2; ++i) {
      const YAML::Node item = (*node)[i];
      std::optional<double> value;
      if (item.IsScalar()) value = internal::ParseFiniteNumber(item.Scalar());
      if (!value) {
        problems_.Add(item.Mark(), entry.KeyPath(Indexed("mean_window", i)),
                      "expected a number, got " +
                          (item.IsScalar() ? QuoteValue(item.Scalar())
                                           : std::string(internal::DescribeNodeType(item))));
        return;
      }
      bounds[i] = *value;
    }
    if (bounds[0] >= bounds[1]) {
      entry.Report("mean_window", "low " + FormatNumber(bounds[0]) + " must be below high " +
                                      FormatNumber(bounds[1]));
      return;
    }
    checks.mean_window = ValueRange{bounds[0], bounds[1]};
  }

  void ReadStorage(MapReader& top) {
    const YAML::Node* node = top.Find("storage");
    if (node == nullptr) return;
    MapReader storage(problems_, *node, "storage", kStorageKeys);
    if (!storage.is_map()) return;
    StorageConfig& config = site_.storage;
    storage.ReadString("path", config.path, Need::kOptional);
    if (const YAML::Node* retention_node = storage.Find("retention")) {
      MapReader retention(problems_, *retention_node, "storage.retention", kRetentionKeys);
      if (retention.is_map()) {
        RetentionConfig& days = config.retention;
        for (auto [key, out] :
             {std::pair{"raw_days", &days.raw_days}, std::pair{"hourly_days", &days.hourly_days},
              std::pair{"daily_days", &days.daily_days},
              std::pair{"spectrum_days", &days.spectrum_days}}) {
          long long value = 0;
          if (!retention.ReadInteger(key, value, Need::kOptional)) continue;
          if (value < 0) {
            retention.Report(key,
                             "must be 0 (keep forever) or more days, got " + std::to_string(value));
          } else if (value > kMaxRetentionDays) {
            retention.Report(key, "must be at most " + std::to_string(kMaxRetentionDays) +
                                      " days (0 keeps forever), got " + std::to_string(value));
          } else {
            *out = static_cast<int>(value);
          }
        }
      }
    }
    double spacing = 0.0;
    if (storage.ReadNumber("spectrum_every_s", spacing, Need::kOptional)) {
      if (spacing < 0.0) {
        storage.Report("spectrum_every_s",
                       "must be 0 (every interval) or more seconds, got " + FormatNumber(spacing));
      } else if (spacing > kMaxSeconds) {
        storage.Report("spectrum_every_s", "must be at most " + FormatNumber(kMaxSeconds) +
                                               " seconds, got " + FormatNumber(spacing));
      } else {
        config.spectrum_every_s = spacing;
      }
    }
    storage.ReadParsed("durability", config.durability, Need::kOptional, ParseDurability);
  }

  // A port key: 0 to 65535 (0 only when allow_zero). Returns true when stored.
  bool ReadPort(MapReader& map, std::string_view key, std::uint16_t& out, Need need,
                bool allow_zero) {
    long long port = 0;
    if (!map.ReadInteger(key, port, need)) return false;
    if (port < (allow_zero ? 0 : 1) || port > 65535) {
      map.Report(key, "port " + std::to_string(port) + " is out of range (" +
                          (allow_zero ? "0" : "1") + " to 65535)");
      return false;
    }
    out = static_cast<std::uint16_t>(port);
    return true;
  }

  void ReadHealth(MapReader& top) {
    const YAML::Node* node = top.Find("health");
    if (node == nullptr) return;
    MapReader health(problems_, *node, "health", kHealthKeys);
    if (!health.is_map()) return;
    HealthConfig& config = site_.health;
    health.ReadBool("enabled", config.enabled, Need::kOptional);
    if (health.ReadString("address", config.address, Need::kOptional) &&
        !IsNumericAddress(config.address)) {
      health.Report("address", "address " + QuoteValue(config.address) +
                                   " is not a numeric IPv4 or IPv6 address");
    }
    ReadPort(health, "port", config.port, Need::kOptional, true);
  }

  void ReadMessaging(MapReader& top) {
    const YAML::Node* node = top.Find("messaging");
    if (node == nullptr) return;
    MapReader messaging(problems_, *node, "messaging", kMessagingKeys);
    if (!messaging.is_map()) return;
    MessagingConfig config;
    if (messaging.ReadString("host", config.host, Need::kRequired) && config.host.empty()) {
      messaging.Report("host", "the broker's host name or address is empty");
    }
    ReadPort(messaging, "port", config.port, Need::kOptional, false);
    // MQTT 3.1.1 allows 1 to 23 characters of [0-9a-zA-Z] at least; brokers accept more, so only
    // the protocol's hard limit (a UTF-8 string of at most 65535 bytes) and emptiness are checked.
    if (messaging.ReadString("client_id", config.client_id, Need::kOptional) &&
        (config.client_id.empty() || config.client_id.size() > 65535)) {
      messaging.Report("client_id", "must be 1 to 65535 characters, or left out");
    }
    messaging.ReadParsed("protocol", config.protocol, Need::kOptional, ParseMqttProtocol);
    if (messaging.ReadString("topic_prefix", config.topic_prefix, Need::kOptional)) {
      const std::string& prefix = config.topic_prefix;
      if (prefix.empty() || prefix.front() == '/' || prefix.back() == '/' ||
          prefix.find_first_of("+#") != std::string::npos ||
          prefix.find('\0') != std::string::npos) {
        messaging.Report("topic_prefix", "topic prefix " + QuoteValue(prefix) +
                                             " must be non-empty, without '+', '#' or a leading "
                                             "or trailing '/'");
      }
    }
    long long keepalive = 0;
    if (messaging.ReadInteger("keepalive_s", keepalive, Need::kOptional)) {
      // MQTT keep alive is a 16-bit count of seconds; libmosquitto refuses below 5.
      if (keepalive < 5 || keepalive > 65535) {
        messaging.Report("keepalive_s",
                         "must be 5 to 65535 seconds, got " + std::to_string(keepalive));
      } else {
        config.keepalive_s = static_cast<int>(keepalive);
      }
    }
    messaging.ReadString("username", config.username, Need::kOptional);
    messaging.ReadString("password_file", config.password_file, Need::kOptional);
    if (messaging.Has("password_file") && config.username.empty()) {
      messaging.Report("password_file", "a password file needs a username");
    }
    if (const YAML::Node* tls_node = messaging.Find("tls")) {
      MapReader tls(problems_, *tls_node, "messaging.tls", kTlsKeys);
      if (tls.is_map()) {
        MqttTlsConfig files;
        tls.ReadString("ca_file", files.ca_file, Need::kRequired);
        tls.ReadString("cert_file", files.cert_file, Need::kOptional);
        tls.ReadString("key_file", files.key_file, Need::kOptional);
        if (files.cert_file.empty() != files.key_file.empty()) {
          tls.Report(files.cert_file.empty() ? "cert_file" : "key_file",
                     "cert_file and key_file go together (a client certificate and its key)");
        }
        config.tls = files;
      }
    }
    bool backoff_ok = true;
    for (auto [key, out] : {std::pair{"reconnect_min_s", &config.reconnect_min_s},
                            std::pair{"reconnect_max_s", &config.reconnect_max_s}}) {
      double seconds = 0.0;
      if (!messaging.ReadNumber(key, seconds, Need::kOptional)) continue;
      // libmosquitto counts reconnect delays in whole seconds.
      if (seconds < 1.0 || seconds > 3600.0) {
        messaging.Report(key, "must be 1 to 3600 seconds, got " + FormatNumber(seconds));
        backoff_ok = false;
      } else {
        *out = seconds;
      }
    }
    if (backoff_ok && config.reconnect_max_s < config.reconnect_min_s) {
      messaging.Report("reconnect_max_s", "must be at least reconnect_min_s (" +
                                              FormatNumber(config.reconnect_min_s) + "), got " +
                                              FormatNumber(config.reconnect_max_s));
    }
    if (double hours = 0.0; messaging.ReadNumber("sent_retention_h", hours, Need::kOptional)) {
      if (!(hours > 0.0) || hours > 24.0 * kMaxRetentionDays) {
        messaging.Report("sent_retention_h", "must be above 0 and at most " +
                                                 std::to_string(24 * kMaxRetentionDays) +
                                                 " hours, got " + FormatNumber(hours));
      } else {
        config.sent_retention_h = hours;
      }
    }
    if (const YAML::Node* bands_node = messaging.Find("band_values")) {
      MapReader bands(problems_, *bands_node, "messaging.band_values", kBandValueKeys);
      if (bands.is_map()) {
        BandPublishingConfig& out = config.band_values;
        out.enabled = true;  // the section given means publishing, unless enabled says otherwise
        bands.ReadBool("enabled", out.enabled, Need::kOptional);
        long long every = 0;
        if (bands.ReadInteger("every_intervals", every, Need::kOptional)) {
          if (every < 1 || every > 1000000) {
            bands.Report("every_intervals", "must be 1 to 1000000, got " + std::to_string(every));
          } else {
            out.every_intervals = static_cast<int>(every);
          }
        }
        long long qos = 0;
        if (bands.ReadInteger("qos", qos, Need::kOptional)) {
          if (qos != 0 && qos != 1) {
            bands.Report("qos", "must be 0 or 1, got " + std::to_string(qos));
          } else {
            out.qos = static_cast<int>(qos);
          }
        }
      }
    }
    if (const YAML::Node* hook_node = messaging.Find("command_hook")) {
      MapReader hook(problems_, *hook_node, "messaging.command_hook", kHookKeys);
      if (hook.is_map()) {
        CommandHookConfig out;
        // Run without a shell: an absolute path, so no search path decides what runs.
        if (hook.ReadString("program", out.program, Need::kRequired) &&
            (out.program.empty() || out.program.front() != '/')) {
          hook.Report("program", "program " + QuoteValue(out.program) +
                                     " must be an absolute path (it is run without a shell)");
        }
        hook.ReadStringList("args", out.args, Need::kOptional);
        if (hook.ReadNumber("timeout_s", out.timeout_s, Need::kOptional) &&
            (out.timeout_s <= 0.0 || out.timeout_s > 3600.0)) {
          hook.Report("timeout_s", "must be above 0 and at most 3600 seconds, got " +
                                       FormatNumber(out.timeout_s));
        }
        config.command_hook = std::move(out);
      }
    }
    site_.messaging = std::move(config);
  }

  void ReadListeners(MapReader& top) {
    std::map<std::string, int, std::less<>> seen;
    auto items = top.ReadList("listeners", Need::kOptional);
    for (std::size_t i = 0; i < items.size(); ++i) {
      MapReader entry(problems_, items[i], Indexed("listeners", i), kListenerKeys);
      if (!entry.is_map()) continue;
      ListenerConfig listener;
      entry.ReadParsed("type", listener.type, Need::kOptional, ParseListenerType);
      bool address_ok = true;
      if (entry.ReadString("address", listener.address, Need::kOptional) &&
          !IsNumericAddress(listener.address)) {
        entry.Report("address", "address " + QuoteValue(listener.address) +
                                    " is not a numeric IPv4 or IPv6 address");
        address_ok = false;
      }
      long long port = 0;
      bool port_ok = entry.ReadInteger("port", port, Need::kRequired);
      if (port_ok && (port < 0 || port > 65535)) {
        entry.Report("port", "port " + std::to_string(port) + " is out of range (0 to 65535)");
        port_ok = false;
      }
      if (port_ok) listener.port = static_cast<std::uint16_t>(port);
      if (entry.ReadCount("max_connections", listener.max_connections, Need::kOptional) &&
          listener.max_connections == 0) {
        entry.Report("max_connections", "must be at least 1, got 0");
      }
      if (entry.ReadNumber("idle_timeout_s", listener.idle_timeout_s, Need::kOptional) &&
          listener.idle_timeout_s <= 0.0) {
        entry.Report("idle_timeout_s",
                     "must be above 0 seconds, got " + FormatNumber(listener.idle_timeout_s));
      }
      if (entry.ReadCount("max_frame_bytes", listener.max_frame_bytes, Need::kOptional) &&
          listener.max_frame_bytes == 0) {
        entry.Report("max_frame_bytes", "must be at least 1, got 0");
      }
      if (listener.type == ListenerType::kUdp) {
        for (auto key : {"max_connections", "idle_timeout_s"}) {
          if (entry.Has(key)) entry.Report(key, "applies to tcp listeners only");
        }
      }
      std::vector<std::string> peers_read;
      bool peers_ok = entry.ReadStringList("allowed_peers", peers_read, Need::kOptional);
      if (peers_ok) listener.allowed_peers = peers_read;
      if (!peers_read.empty()) {
        const YAML::Node& peers = *entry.Find("allowed_peers");
        for (std::size_t p = 0; p < peers_read.size(); ++p) {
          // An empty entry was not text; that is reported already.
          if (!peers_read[p].empty() && !IsNumericAddress(peers_read[p])) {
            problems_.Add(
                peers[p].Mark(), entry.KeyPath(Indexed("allowed_peers", p)),
                "address " + QuoteValue(peers_read[p]) + " is not a numeric IPv4 or IPv6 address");
          }
        }
      }
      if (address_ok && port_ok && listener.port != 0) {
        CheckUnique(seen, entry, "port",
                    std::string(ToString(listener.type)) + " " + listener.address + " port " +
                        std::to_string(listener.port),
                    "listener on");
      }
      site_.listeners.push_back(std::move(listener));
    }
  }

  void ReadDropDirectory(MapReader& top) {
    const YAML::Node* node = top.Find("drop_directory");
    if (node == nullptr) return;
    MapReader entry(problems_, *node, "drop_directory", kDropKeys);
    if (!entry.is_map()) return;
    DropDirectoryConfig drop;
    entry.ReadString("path", drop.path, Need::kRequired);
    if (entry.ReadNumber("poll_interval_s", drop.poll_interval_s, Need::kOptional) &&
        drop.poll_interval_s <= 0.0) {
      entry.Report("poll_interval_s",
                   "must be above 0 seconds, got " + FormatNumber(drop.poll_interval_s));
    }
    std::vector<std::string> point_ids;
    for (const auto& point : site_.points) point_ids.push_back(point.id);
    auto items = entry.ReadList("files", Need::kRequired);
    for (std::size_t i = 0; i < items.size(); ++i) {
      MapReader file(problems_, items[i], entry.KeyPath(Indexed("files", i)), kDropFileKeys);
      if (!file.is_map()) continue;
      DropFileConfig rule;
      bool pattern_ok = file.ReadString("pattern", rule.pattern, Need::kRequired);
      const PointConfig* point = nullptr;
      if (file.ReadString("point", rule.point, Need::kRequired)) {
        point = site_.FindPoint(rule.point);
        if (point == nullptr)
          file.Report("point", UnknownReference("point", rule.point, point_ids));
      }
      bool format_ok = false;
      if (file.Has("format")) {
        format_ok = file.ReadParsed("format", rule.format, Need::kOptional, ParseFileFormat);
      } else if (pattern_ok) {
        if (auto format = FileFormatFromName(rule.pattern)) {
          rule.format = *format;
          format_ok = true;
        } else {
          file.Report("pattern", "cannot tell the format from " + QuoteValue(rule.pattern) +
                                     " (extensions .wav .csv .f32 .i16 .frames); add format");
        }
      }
      if (file.ReadNumber("sample_rate_hz", rule.sample_rate_hz, Need::kOptional)) {
        if (rule.sample_rate_hz <= 0.0) {
          file.Report("sample_rate_hz",
                      "must be above 0 Hz, got " + FormatNumber(rule.sample_rate_hz));
        } else if (format_ok &&
                   (rule.format == FileFormat::kWav || rule.format == FileFormat::kFrames)) {
          file.Report("sample_rate_hz", "is read from the " + std::string(ToString(rule.format)) +
                                            " file itself; give it for csv and raw files only");
        } else if (point != nullptr && point->sample_rate_hz > 0.0 &&
                   rule.sample_rate_hz != point->sample_rate_hz) {
          file.Report("sample_rate_hz",
                      "sample_rate_hz " + FormatNumber(rule.sample_rate_hz) + " differs from " +
                          QuoteValue(point->id) + "'s sample_rate_hz " +
                          FormatNumber(point->sample_rate_hz) +
                          "; the point's bands and profile are set for its own rate");
        }
      }
      drop.files.push_back(std::move(rule));
    }
    site_.drop_directory = std::move(drop);
  }

  ProblemList problems_;
  SiteConfig site_;
  std::map<std::string, ProfilePlace, std::less<>> profile_places_;
};

}  // namespace

LoadedSite ParseSiteText(std::string_view text, std::string display_name) {
  SiteLoader loader(std::move(display_name));
  return loader.Load(text);
}

LoadedSite LoadSiteFile(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    SiteLoader loader(path.string());
    loader.AddFileProblem("cannot read the file: " + std::string(std::strerror(errno)));
    return loader.Finish();
  }
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) {
    SiteLoader loader(path.string());
    loader.AddFileProblem("cannot read the file: " + std::string(std::strerror(errno)));
    return loader.Finish();
  }
  return ParseSiteText(text.str(), path.string());
}

}  // namespace spinward::config
