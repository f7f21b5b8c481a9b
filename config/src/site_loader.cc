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
#include <map>
#include <sstream>
#include <utility>

#include "spinward/config/nearest_key.h"
#include "spinward/config/point_options.h"
#include "yaml_map_reader.h"

namespace spinward::config {
namespace {

using internal::MapReader;
using internal::Need;
using internal::ProblemList;
using internal::QuoteValue;

constexpr std::array<std::string_view, 8> kTopKeys{
    "site", "machines", "profiles", "points", "listeners", "drop_directory", "storage", "logging"};
constexpr std::array<std::string_view, 1> kSiteKeys{"name"};
constexpr std::array<std::string_view, 6> kMachineKeys{"id",        "name",      "kind",
                                                       "speed_rpm", "iso_group", "support"};
constexpr std::array<std::string_view, 9> kProfileKeys{
    "id",      "segment",   "overlap",    "fft_length",     "window",
    "detrend", "averaging", "interval_s", "time_constant_s"};
constexpr std::array<std::string_view, 10> kPointKeys{
    "id",          "machine", "location",       "direction", "sensor",
    "sensitivity", "units",   "sample_rate_hz", "profile",   "bands"};
constexpr std::array<std::string_view, 5> kBandKeys{"name", "lo_hz", "hi_hz", "quantity", "units"};
constexpr std::array<std::string_view, 7> kListenerKeys{
    "type",           "address",         "port",         "max_connections",
    "idle_timeout_s", "max_frame_bytes", "allowed_peers"};
constexpr std::array<std::string_view, 3> kDropKeys{"path", "poll_interval_s", "files"};
constexpr std::array<std::string_view, 4> kDropFileKeys{"pattern", "point", "format",
                                                        "sample_rate_hz"};
constexpr std::array<std::string_view, 1> kStorageKeys{"path"};
constexpr std::array<std::string_view, 2> kLoggingKeys{"level", "file"};

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
    ReadListeners(top);
    ReadDropDirectory(top);
    if (const YAML::Node* node = top.Find("storage")) {
      MapReader storage(problems_, *node, "storage", kStorageKeys);
      storage.ReadString("path", site_.storage.path, Need::kOptional);
    }
    if (const YAML::Node* node = top.Find("logging")) {
      MapReader logging(problems_, *node, "logging", kLoggingKeys);
      logging.ReadParsed("level", site_.logging.level, Need::kOptional, ParseLogLevel);
      logging.ReadString("file", site_.logging.file, Need::kOptional);
    }
    if (top.Find("listeners") == nullptr && top.Find("drop_directory") == nullptr) {
      problems_.Add(top.mark(), "listeners",
                    "no sample source: give listeners, a drop_directory or both");
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
        CheckUnique(seen_names, entry, "name", band.name, "band name");
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
