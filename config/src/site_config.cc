#include "spinward/config/site_config.h"

#include <algorithm>
#include <array>
#include <cctype>
#include <charconv>
#include <cmath>
#include <sstream>
#include <utility>

namespace spinward::config {
namespace {

template <typename T, std::size_t N>
using Spellings = std::array<std::pair<std::string_view, T>, N>;

constexpr Spellings<MachineKind, 6> kMachineKinds{{{"pump", MachineKind::kPump},
                                                   {"fan", MachineKind::kFan},
                                                   {"motor", MachineKind::kMotor},
                                                   {"gearbox", MachineKind::kGearbox},
                                                   {"compressor", MachineKind::kCompressor},
                                                   {"other", MachineKind::kOther}}};
constexpr Spellings<MachineSupport, 2> kSupports{
    {{"rigid", MachineSupport::kRigid}, {"flexible", MachineSupport::kFlexible}}};
constexpr Spellings<Direction, 3> kDirections{{{"horizontal", Direction::kHorizontal},
                                               {"vertical", Direction::kVertical},
                                               {"axial", Direction::kAxial}}};
constexpr Spellings<ListenerType, 2> kListenerTypes{
    {{"tcp", ListenerType::kTcp}, {"udp", ListenerType::kUdp}}};
constexpr Spellings<FileFormat, 5> kFileFormats{{{"wav", FileFormat::kWav},
                                                 {"csv", FileFormat::kCsv},
                                                 {"raw_float32", FileFormat::kRawFloat32},
                                                 {"raw_int16", FileFormat::kRawInt16},
                                                 {"frames", FileFormat::kFrames}}};
constexpr Spellings<LogLevel, 5> kLogLevels{{{"trace", LogLevel::kTrace},
                                             {"debug", LogLevel::kDebug},
                                             {"info", LogLevel::kInfo},
                                             {"warn", LogLevel::kWarn},
                                             {"error", LogLevel::kError}}};

constexpr Spellings<AlarmPreset, 1> kAlarmPresets{{{"iso10816-3", AlarmPreset::kIso10816_3}}};
constexpr Spellings<Durability, 2> kDurabilities{
    {{"full", Durability::kFull}, {"normal", Durability::kNormal}}};
constexpr Spellings<MqttProtocol, 2> kMqttProtocols{
    {{"3.1.1", MqttProtocol::kV311}, {"5", MqttProtocol::kV5}}};

template <typename T, std::size_t N>
Result<T> ParseSpelling(std::string_view text, const Spellings<T, N>& table,
                        std::string_view what) {
  for (const auto& [spelling, value] : table) {
    if (spelling == text) return value;
  }
  std::string accepted;
  for (const auto& entry : table) {
    if (!accepted.empty()) accepted += ", ";
    accepted += entry.first;
  }
  return Error{"unknown " + std::string(what) + " '" + std::string(text) +
               "' (accepted: " + accepted + ")"};
}

template <typename T, std::size_t N>
std::string_view Spell(T value, const Spellings<T, N>& table) {
  for (const auto& [spelling, entry] : table) {
    if (entry == value) return spelling;
  }
  return "?";
}

template <typename Entry>
const Entry* FindById(const std::vector<Entry>& entries, std::string_view id) {
  auto it = std::find_if(entries.begin(), entries.end(),
                         [id](const Entry& entry) { return entry.id == id; });
  return it == entries.end() ? nullptr : &*it;
}

}  // namespace

Result<MachineKind> ParseMachineKind(std::string_view text) {
  return ParseSpelling(text, kMachineKinds, "machine kind");
}
Result<MachineSupport> ParseMachineSupport(std::string_view text) {
  return ParseSpelling(text, kSupports, "support");
}
Result<Direction> ParseDirection(std::string_view text) {
  return ParseSpelling(text, kDirections, "direction");
}
Result<ListenerType> ParseListenerType(std::string_view text) {
  return ParseSpelling(text, kListenerTypes, "listener type");
}
Result<FileFormat> ParseFileFormat(std::string_view text) {
  return ParseSpelling(text, kFileFormats, "file format");
}
Result<LogLevel> ParseLogLevel(std::string_view text) {
  return ParseSpelling(text, kLogLevels, "log level");
}

Result<AlarmPreset> ParseAlarmPreset(std::string_view text) {
  return ParseSpelling(text, kAlarmPresets, "alarm preset");
}
Result<Durability> ParseDurability(std::string_view text) {
  return ParseSpelling(text, kDurabilities, "durability");
}

std::string_view ToString(MachineKind value) { return Spell(value, kMachineKinds); }
std::string_view ToString(MachineSupport value) { return Spell(value, kSupports); }
std::string_view ToString(Direction value) { return Spell(value, kDirections); }
std::string_view ToString(ListenerType value) { return Spell(value, kListenerTypes); }
std::string_view ToString(FileFormat value) { return Spell(value, kFileFormats); }
std::string_view ToString(LogLevel value) { return Spell(value, kLogLevels); }
std::string_view ToString(AlarmPreset value) {
  return value == AlarmPreset::kNone ? "none" : Spell(value, kAlarmPresets);
}
std::string_view ToString(Durability value) { return Spell(value, kDurabilities); }
Result<MqttProtocol> ParseMqttProtocol(std::string_view text) {
  return ParseSpelling(text, kMqttProtocols, "MQTT protocol");
}
std::string_view ToString(MqttProtocol value) { return Spell(value, kMqttProtocols); }

const OverallMeasure* FindOverallMeasure(std::string_view name) {
  for (const auto& measure : kOverallMeasures) {
    if (measure.name == name) return &measure;
  }
  return nullptr;
}

namespace {

std::string_view Trim(std::string_view text) {
  while (!text.empty() && std::isspace(static_cast<unsigned char>(text.front()))) {
    text.remove_prefix(1);
  }
  while (!text.empty() && std::isspace(static_cast<unsigned char>(text.back()))) {
    text.remove_suffix(1);
  }
  return text;
}

std::optional<long long> WholeNumber(std::string_view text) {
  long long value = 0;
  auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (text.empty() || error != std::errc() || end != text.data() + text.size()) return std::nullopt;
  return value;
}

std::optional<double> FiniteNumber(std::string_view text) {
  if (!text.empty() && text.front() == '+') text.remove_prefix(1);
  double value = 0.0;
  auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (text.empty() || error != std::errc() || end != text.data() + text.size() ||
      !std::isfinite(value)) {
    return std::nullopt;
  }
  return value;
}

std::string Number(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

}  // namespace

Result<OnDelay> ParseOnDelay(std::string_view text) {
  const std::string quoted = "'" + std::string(text) + "'";
  const std::string_view trimmed = Trim(text);
  std::optional<long long> n;
  std::optional<long long> m;
  if (auto of = trimmed.find(" of "); of != std::string_view::npos) {
    n = WholeNumber(Trim(trimmed.substr(0, of)));
    m = WholeNumber(Trim(trimmed.substr(of + 4)));
  } else {
    n = WholeNumber(trimmed);
    m = n;
  }
  if (!n || !m) {
    return Error{"on_delay " + quoted +
                 " is not 'N of M' (N of the last M intervals, e.g. '2 of 3') or a whole number N"};
  }
  if (*n < 1) return Error{"on_delay " + quoted + ": N must be at least 1"};
  if (*n > *m) {
    return Error{"on_delay " + quoted + ": N (" + std::to_string(*n) + ") must not exceed M (" +
                 std::to_string(*m) + ")"};
  }
  if (*m > kMaxOnDelayWindow) {
    return Error{"on_delay " + quoted + ": M must be at most " + std::to_string(kMaxOnDelayWindow) +
                 " intervals"};
  }
  return OnDelay{static_cast<int>(*n), static_cast<int>(*m)};
}

Result<Deadband> ParseDeadband(std::string_view text) {
  const std::string quoted = "'" + std::string(text) + "'";
  std::string_view trimmed = Trim(text);
  Deadband deadband;
  if (!trimmed.empty() && trimmed.back() == '%') {
    deadband.kind = DeadbandKind::kPercent;
    trimmed = Trim(trimmed.substr(0, trimmed.size() - 1));
  } else {
    deadband.kind = DeadbandKind::kAbsolute;
  }
  auto value = FiniteNumber(trimmed);
  if (!value) {
    return Error{
        "deadband " + quoted +
        " is not a percentage of the setpoint like '5%' or a number in the measure's unit"};
  }
  if (*value < 0.0) return Error{"deadband " + quoted + " must not be negative"};
  // The alarm engine refuses 50 % or more: the reset level would sit at half the setpoint or
  // lower, too far below it to mean "back to normal".
  if (deadband.kind == DeadbandKind::kPercent && *value >= 50.0) {
    return Error{"deadband " + quoted + " is too wide: a percentage must be below 50%, got " +
                 Number(*value) + "%"};
  }
  deadband.value = *value;
  return deadband;
}

std::optional<FileFormat> FileFormatFromName(std::string_view name) {
  auto dot = name.rfind('.');
  if (dot == std::string_view::npos) return std::nullopt;
  std::string extension(name.substr(dot + 1));
  std::transform(extension.begin(), extension.end(), extension.begin(), [](unsigned char c) {
    return static_cast<char>(c >= 'A' && c <= 'Z' ? c + 32 : c);
  });
  if (extension == "wav") return FileFormat::kWav;
  if (extension == "csv") return FileFormat::kCsv;
  if (extension == "f32") return FileFormat::kRawFloat32;
  if (extension == "i16") return FileFormat::kRawInt16;
  if (extension == "frames") return FileFormat::kFrames;
  return std::nullopt;
}

const MachineConfig* SiteConfig::FindMachine(std::string_view id) const {
  return FindById(machines, id);
}
const ProfileConfig* SiteConfig::FindProfile(std::string_view id) const {
  return FindById(profiles, id);
}
const PointConfig* SiteConfig::FindPoint(std::string_view id) const { return FindById(points, id); }

}  // namespace spinward::config
