#include "spinward/config/site_config.h"

#include <algorithm>
#include <array>
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

std::string_view ToString(MachineKind value) { return Spell(value, kMachineKinds); }
std::string_view ToString(MachineSupport value) { return Spell(value, kSupports); }
std::string_view ToString(Direction value) { return Spell(value, kDirections); }
std::string_view ToString(ListenerType value) { return Spell(value, kListenerTypes); }
std::string_view ToString(FileFormat value) { return Spell(value, kFileFormats); }
std::string_view ToString(LogLevel value) { return Spell(value, kLogLevels); }

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
