// The site model: what one site YAML file describes, as plain structs with their defaults written
// in place. A SiteConfig is a value: the loader (site_loader.h) fills and checks it, the daemon
// keeps one per (re)load and hands copies to whoever needs them. The estimator settings are carried
// in the estimators' own option types (WindowSpec, BandSpec, Unit, Sensitivity), so nothing is
// converted twice. Alarm limit sets, sensor checks and storage retention are plain structs of their
// own: config/ does not depend on the daemon or storage, which map them onto their types
// (daemon/src/site_judgement.h). Keys and their meaning: docs/configuration.md.
// Thread-safety: plain values; safe to copy between threads, not to mutate from two at once.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "spinward/config/diagnostics_config.h"
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
enum class AlarmPreset { kNone, kIso10816_3 };
enum class DeadbandKind { kPercent, kAbsolute };  // percent of each setpoint, or the measure's unit
enum class Durability { kFull, kNormal };         // SQLite synchronous FULL or NORMAL

// Each parser accepts the lower-case YAML spelling and names the accepted ones when it fails.
Result<MachineKind> ParseMachineKind(
    std::string_view text);  // pump fan motor gearbox compressor other
Result<MachineSupport> ParseMachineSupport(std::string_view text);  // rigid flexible
Result<Direction> ParseDirection(std::string_view text);            // horizontal vertical axial
Result<ListenerType> ParseListenerType(std::string_view text);      // tcp udp
Result<FileFormat> ParseFileFormat(std::string_view text);  // wav csv raw_float32 raw_int16 frames
Result<LogLevel> ParseLogLevel(std::string_view text);      // trace debug info warn error
Result<AlarmPreset> ParseAlarmPreset(std::string_view text);  // iso10816-3
Result<Durability> ParseDurability(std::string_view text);    // full normal
std::string_view ToString(MachineKind value);
std::string_view ToString(MachineSupport value);
std::string_view ToString(Direction value);
std::string_view ToString(ListenerType value);
std::string_view ToString(FileFormat value);
std::string_view ToString(LogLevel value);
std::string_view ToString(AlarmPreset value);  // "none" for kNone
std::string_view ToString(Durability value);
// The format a file name's extension implies: .wav, .csv, .f32, .i16, .frames; none otherwise.
std::optional<FileFormat> FileFormatFromName(std::string_view name);

// The overall (time-domain) indicators a limit set may judge besides the point's bands, under the
// names trend storage and the alarm stage use. dimensionless: crest factor and kurtosis are ratios;
// the others are in the point's sample unit.
struct OverallMeasure {
  std::string_view name;
  bool dimensionless;
};
inline constexpr OverallMeasure kOverallMeasures[] = {
    {"overall_rms", false},         {"overall_peak", false},    {"overall_peak_to_peak", false},
    {"overall_crest_factor", true}, {"overall_kurtosis", true}, {"overall_mean", false},
};
// Null when `name` is not an overall indicator.
const OverallMeasure* FindOverallMeasure(std::string_view name);

// The longest on-delay window ("N of M" with M up to this), the same bound the alarm engine keeps.
inline constexpr int kMaxOnDelayWindow = 64;

struct OnDelay {
  int n = 1;  // raise when at least n ...
  int m = 1;  // ... of the last m intervals reach the setpoint
};
// "2 of 3" (N of the last M intervals) or a whole number N (N of N); 1 <= N <= M <= 64.
Result<OnDelay> ParseOnDelay(std::string_view text);

struct Deadband {
  DeadbandKind kind = DeadbandKind::kPercent;
  double value = 5.0;
};
// "5%" (percent of each setpoint, below 50) or a number >= 0 in the measure's unit.
Result<Deadband> ParseDeadband(std::string_view text);

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
  MachineDiagnosticsConfig diagnostics;  // bearing, vanes, speed source (diagnostics_config.h)
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

// One limit set of a point: the alarm on one measure. Values are in the measure's unit (the band's
// unit, the sample unit for overall_rms/peak/peak_to_peak/mean, none for crest factor and
// kurtosis). With the ISO preset the high limits come from the machine's ISO 10816-3 class and are
// not written here.
struct AlarmLimitConfig {
  std::string measure;          // required: a band name of the point or an overall indicator
  std::optional<double> alert;  // high limits; required unless a preset gives them
  std::optional<double> danger;
  std::optional<double> low_alert;  // optional low limits (a fan whose belt broke goes quiet)
  std::optional<double> low_danger;
  Deadband deadband;  // 5 % of each setpoint
  OnDelay on_delay;   // 1 of 1: raise on the first interval at the setpoint
  int off_delay = 1;  // consecutive intervals past the reset level before clearing
  bool latching = false;
  std::optional<double> stale_after_s;  // unset: no stale check
  AlarmPreset preset = AlarmPreset::kNone;
  std::optional<double> baseline;  // mm/s; with the ISO preset: the standard's baseline rule
};

struct ValueRange {
  double low = 0.0;
  double high = 0.0;
};

// Per-point sensor checks (flatline, clipping, DC bias, dropouts); absent keys keep the checks
// off or at the alarm engine's defaults.
struct SensorChecksConfig {
  std::optional<double> full_scale;       // sample unit; enables the clipping check
  std::size_t clip_count = 3;             // clipped samples per interval that fault the sensor
  std::optional<double> noise_floor_rms;  // sample unit; RMS at or below it is a flatline
  std::size_t identical_run = 100;        // longest run of identical samples tolerated
  std::optional<ValueRange> mean_window;  // sample unit: DC bias window of the interval mean
  std::size_t max_sequence_gaps = 0;      // frames lost per interval before the sensor faults
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
  std::vector<AlarmLimitConfig> alarms;          // at most one per measure
  SensorChecksConfig sensor_checks;
  PointDiagnosticsConfig diagnostics;  // tachometer, order bands, envelope (diagnostics_config.h)
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

// Days each level of the trend database is kept; 0 keeps it forever.
struct RetentionConfig {
  int raw_days = 90;
  int hourly_days = 1095;  // three years
  int daily_days = 0;
  int spectrum_days = 90;
};
// The longest retention accepted: 100000 days (274 years) in nanoseconds stays inside int64.
inline constexpr int kMaxRetentionDays = 100000;

struct StorageConfig {
  std::string path = "spinward.sqlite";
  RetentionConfig retention;
  double spectrum_every_s = 3600.0;  // spacing of stored spectrum snapshots; 0: every interval
  Durability durability = Durability::kFull;
};

struct LoggingConfig {
  LogLevel level = LogLevel::kInfo;
  std::string file;  // empty: standard error
};

// The HTTP health endpoint (docs/health.md): loopback by default, since it carries no
// authentication.
struct HealthConfig {
  bool enabled = true;
  std::string address = "127.0.0.1";  // numeric IPv4 or IPv6
  std::uint16_t port = 7480;          // 0: any free port
};

enum class MqttProtocol { kV311, kV5 };
// "3.1.1" or "5".
Result<MqttProtocol> ParseMqttProtocol(std::string_view text);
std::string_view ToString(MqttProtocol value);

// TLS towards the broker: all files PEM. ca_file alone verifies the broker; cert_file and key_file
// (always together) add a client certificate.
struct MqttTlsConfig {
  std::string ca_file;  // required when tls is given
  std::string cert_file;
  std::string key_file;
};

// Band values published per averaging interval (docs/messaging.md): not stored for later, so a
// message missed while the broker is away is gone (the trend database keeps every value).
struct BandPublishingConfig {
  bool enabled = false;
  int every_intervals = 1;  // publish every Nth interval of each point
  int qos = 0;              // 0 or 1
};

// A program run for every alarm transition with the alarm JSON on standard input, never through a
// shell (an SMS or e-mail gateway).
struct CommandHookConfig {
  std::string program;  // absolute path; required
  std::vector<std::string> args;
  double timeout_s = 10.0;  // killed after this
};

// Publishing to an MQTT broker (docs/messaging.md). The password is read from a file, never from
// the site file.
struct MessagingConfig {
  std::string host;  // required
  std::uint16_t port = 1883;
  std::string client_id;  // empty: "spinward-<site name>" made safe
  MqttProtocol protocol = MqttProtocol::kV311;
  std::string topic_prefix = "spinward";
  int keepalive_s = 30;
  std::string username;
  std::string password_file;  // only with username
  std::optional<MqttTlsConfig> tls;
  double reconnect_min_s = 1.0;
  double reconnect_max_s = 60.0;
  // Outbox rows the broker acknowledged are deleted once they were sent this long ago.
  double sent_retention_h = 72.0;
  BandPublishingConfig band_values;
  std::optional<CommandHookConfig> command_hook;
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
  HealthConfig health;
  std::optional<MessagingConfig> messaging;  // absent: no broker

  // Null when no entry has that id.
  const MachineConfig* FindMachine(std::string_view id) const;
  const ProfileConfig* FindProfile(std::string_view id) const;
  const PointConfig* FindPoint(std::string_view id) const;
};

}  // namespace spinward::config
