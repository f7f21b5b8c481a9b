// The site model: what one site YAML file describes, as plain structs with their defaults written
// in place. A SiteConfig is a value: the loader (site_loader.h) fills and checks it, the daemon
// keeps one per (re)load and hands copies to whoever needs them. The estimator settings are carried
// in the estimators' own option types (WindowSpec, BandSpec, Unit, Sensitivity), so nothing is
// converted twice. Keys and their meaning: docs/configuration.md. Thread-safety: plain values; safe
// to copy between threads, not to mutate from two at once.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/estimators/band_integrator.h"
#include "spinward/estimators/result.h"
#include "spinward/estimators/streaming_welch.h"
#include "spinward/estimators/units.h"
#include "spinward/estimators/window.h"

namespace spinward::config {

enum class MachineKind { kPump, kFan, kMotor, kGearbox, kCompressor, kOther };
enum class MachineSupport { kRigid, kFlexible };  // ISO 10816-3 foundation class
enum class Direction { kHorizontal, kVertical, kAxial };
enum class ListenerType { kTcp, kUdp };
enum class FileFormat { kWav, kCsv, kRawFloat32, kRawInt16, kFrames };
enum class LogLevel { kTrace, kDebug, kInfo, kWarn, kError };

// Each parser accepts the lower-case YAML spelling and names the accepted ones when it fails.
Result<MachineKind> ParseMachineKind(
    std::string_view text);  // pump fan motor gearbox compressor other
Result<MachineSupport> ParseMachineSupport(std::string_view text);  // rigid flexible
Result<Direction> ParseDirection(std::string_view text);            // horizontal vertical axial
Result<ListenerType> ParseListenerType(std::string_view text);      // tcp udp
Result<FileFormat> ParseFileFormat(std::string_view text);  // wav csv raw_float32 raw_int16 frames
Result<LogLevel> ParseLogLevel(std::string_view text);      // trace debug info warn error
std::string_view ToString(MachineKind value);
std::string_view ToString(MachineSupport value);
std::string_view ToString(Direction value);
std::string_view ToString(ListenerType value);
std::string_view ToString(FileFormat value);
std::string_view ToString(LogLevel value);
// The format a file name's extension implies: .wav, .csv, .f32, .i16, .frames; none otherwise.
std::optional<FileFormat> FileFormatFromName(std::string_view name);

struct SiteInfo {
  std::string name;  // required
};

struct MachineConfig {
  std::string id;  // required, unique among machines
  std::string name;
  MachineKind kind = MachineKind::kOther;
  double speed_rpm = 0.0;  // required: nominal running speed
  int iso_group = 2;       // ISO 10816-3 group: 1 (300 kW to 50 MW) or 2 (15 kW to 300 kW)
  MachineSupport support = MachineSupport::kRigid;
};

// Estimator settings shared by points. The overlap is held in samples: a percentage in the file is
// turned into samples of this profile's segment when it is loaded.
struct ProfileConfig {
  std::string id;  // required, unique among profiles
  std::size_t segment_length = 4096;
  std::size_t overlap = 2048;
  std::size_t fft_length = 0;  // 0: equal to segment_length
  estimators::WindowSpec window;
  estimators::Detrend detrend = estimators::Detrend::kMean;
  estimators::Averaging averaging = estimators::Averaging::kMean;
  double interval_s = 1.0;       // one completed average per this many seconds (per point's rate)
  double time_constant_s = 1.0;  // exponential averaging only
};

struct PointConfig {
  std::string id;       // required, unique among points
  std::string machine;  // required: a MachineConfig id
  std::string location;
  Direction direction = Direction::kHorizontal;
  std::string sensor;  // required, unique among points: the sensor id frames carry
  // Present when frames carry volts; absent when they carry engineering units already.
  std::optional<estimators::Sensitivity> sensitivity;
  estimators::Unit unit = estimators::Unit::kG;  // acceleration unit of the samples (after volts)
  double sample_rate_hz = 0.0;                   // required
  std::string profile;                           // required: a ProfileConfig id
  std::vector<estimators::BandSpec> bands;       // the band's unit says its quantity
};

struct ListenerConfig {
  ListenerType type = ListenerType::kTcp;
  std::string address = "127.0.0.1";  // a numeric IPv4 or IPv6 address to bind
  std::uint16_t port = 0;             // required; 0 asks the system for a free port
  std::size_t max_connections = 16;   // tcp only
  double idle_timeout_s = 60.0;       // tcp only: a silent connection is closed after this
  std::size_t max_frame_bytes = 1 << 20;
  std::vector<std::string> allowed_peers;  // numeric addresses; empty: any peer
};

struct DropFileConfig {
  std::string pattern;                   // required: a glob on the file name, e.g. "P101_DE_*.wav"
  std::string point;                     // required: a PointConfig id
  FileFormat format = FileFormat::kWav;  // from the pattern's extension unless given
  double sample_rate_hz = 0.0;           // csv and raw only; 0: the point's sample_rate_hz
};

struct DropDirectoryConfig {
  std::string path;  // required
  double poll_interval_s = 2.0;
  std::vector<DropFileConfig> files;
};

// Only the database path for now; retention and roll-up keys join this struct later.
struct StorageConfig {
  std::string path = "spinward.sqlite";
};

struct LoggingConfig {
  LogLevel level = LogLevel::kInfo;
  std::string file;  // empty: standard error
};

struct SiteConfig {
  SiteInfo site;
  std::vector<MachineConfig> machines;
  std::vector<ProfileConfig> profiles;
  std::vector<PointConfig> points;
  std::vector<ListenerConfig> listeners;
  std::optional<DropDirectoryConfig> drop_directory;
  StorageConfig storage;
  LoggingConfig logging;

  // Null when no entry has that id.
  const MachineConfig* FindMachine(std::string_view id) const;
  const ProfileConfig* FindProfile(std::string_view id) const;
  const PointConfig* FindPoint(std::string_view id) const;
};

}  // namespace spinward::config
