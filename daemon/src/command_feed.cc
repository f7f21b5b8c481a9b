// `spinward feed`: a data-acquisition simulator. Streams a synthetic pump signal (or a recording)
// for one or many sensors to a daemon over TCP or UDP, at real-time pace or as fast as possible.
#include <algorithm>
#include <chrono>
#include <cstdio>
#include <limits>
#include <thread>

#include "commands.h"
#include "demo_signal.h"
#include "option_reader.h"
#include "spinward/daemon/frame_sender.h"
#include "spinward/daemon/recording_reader.h"
#include "spinward/estimators/units.h"

namespace spinward::daemon {
namespace {

constexpr const char* kFeedHelp =
    "usage: spinward feed --to HOST:PORT [options]\n"
    "\n"
    "Acts as an acquisition box: cuts samples into protocol frames (docs/protocol.md) and sends\n"
    "them to a daemon. Without --file it sends the built-in synthetic pump signal (shaft lines,\n"
    "vane pass, a rolling-element bearing defect, noise).\n"
    "\n"
    "options:\n"
    "  --to HOST:PORT        the daemon's listener\n"
    "  --udp                 send datagrams (one frame each) instead of a TCP stream\n"
    "  --sensor ID           a sensor id to send for (repeatable; default LK-P101-DE-H)\n"
    "  --sensors N           send for N sensors named PREFIX0001.. (with --sensor-prefix)\n"
    "  --sensor-prefix TEXT  prefix for --sensors (default FEED-)\n"
    "  --seconds S           seconds of signal per sensor (default 10)\n"
    "  --rate HZ             sample rate of the synthetic signal (default 25600)\n"
    "  --frame-samples N     samples per frame (default 2560)\n"
    "  --format F            int16, int32 or float32 on the wire (default float32)\n"
    "  --sensitivity TEXT    sensor sensitivity; frames carry volts (default \"100 mV/g\")\n"
    "  --engineering         send m/s^2 instead of volts (the point then needs no sensitivity)\n"
    "  --defect X            bearing defect impact size in m/s^2 (default 6; 0 for a healthy "
    "pump)\n"
    "  --realtime            pace frames at the sample rate (default: as fast as possible)\n"
    "  --distinct-signals K  make K signals before sending and share them among the sensors\n"
    "                        (default: one per sensor, made while sending; a load test uses a\n"
    "                        few, so the sender outruns the daemon it measures)\n"
    "  --file REC            send a recording (WAV, CSV, raw) instead; --channel N picks a "
    "channel\n"
    "  --start-ns NS         time of the first sample, ns since the Unix epoch (default: now)\n";

struct Feed {
  std::unique_ptr<PumpSignalGenerator> generator;
  std::unique_ptr<SensorStream> stream;
  const std::vector<double>* recording = nullptr;
  std::size_t position = 0;
};

}  // namespace

int CommandFeed(const Arguments& args) {
  auto opt =
      OptionReader::Parse(args,
                          {"--to", "--sensor", "--sensors", "--sensor-prefix", "--seconds",
                           "--rate", "--frame-samples", "--format", "--sensitivity", "--defect",
                           "--file", "--channel", "--start-ns", "--distinct-signals"},
                          {"--help", "--udp", "--realtime", "--engineering"});
  auto fail = [](const std::string& message, int code) {
    std::fprintf(stderr, "spinward feed: %s\n", message.c_str());
    return code;
  };
  if (!opt.ok()) return fail(opt.message(), 2);
  if (opt->Has("--help")) {
    std::fputs(kFeedHelp, stdout);
    return 0;
  }
  auto to = opt->Value("--to");
  if (!to) return fail("--to HOST:PORT is required", 2);
  auto colon = to->rfind(':');
  if (colon == std::string::npos) return fail("--to '" + *to + "': expected HOST:PORT", 2);
  const std::string host = to->substr(0, colon);
  OptionReader port_reader =
      *OptionReader::Parse({"--port", to->substr(colon + 1)}, {"--port"}, {});
  auto port = port_reader.Integer("--port", 0, 1, 65535);
  if (!port.ok()) return fail("--to '" + *to + "': port must be 1..65535", 2);
  auto seconds = opt->Number("--seconds", 10.0);
  auto rate = opt->Number("--rate", 25600.0);
  auto frame_samples = opt->Integer("--frame-samples", 2560, 1, 16000);
  auto sensor_count = opt->Integer("--sensors", 0, 0, 100000);
  auto defect = opt->Number("--defect", 6.0);
  auto channel = opt->Integer("--channel", 0, 0, 1024);
  auto distinct = opt->Integer("--distinct-signals", 0, 1, 64);
  for (const Status& s :
       {seconds.status(), rate.status(), frame_samples.status(), sensor_count.status(),
        defect.status(), channel.status(), distinct.status()}) {
    if (!s.ok()) return fail(s.message(), 2);
  }
  if (!(*seconds > 0)) return fail("--seconds must be positive", 2);
  if (*distinct > 0 && opt->Has("--file")) {
    return fail("--distinct-signals makes synthetic signals: it does not go with --file", 2);
  }
  if (!(*rate > 0)) return fail("--rate must be positive", 2);
  SampleFormat format = SampleFormat::kFloat32;
  const std::string format_text = opt->Value("--format").value_or("float32");
  if (format_text == "int16") {
    format = SampleFormat::kInt16;
  } else if (format_text == "int32") {
    format = SampleFormat::kInt32;
  } else if (format_text != "float32") {
    return fail("--format '" + format_text + "': use int16, int32 or float32", 2);
  }
  const bool engineering = opt->Has("--engineering");
  auto sensitivity =
      estimators::Sensitivity::Parse(opt->Value("--sensitivity").value_or("100 mV/g"));
  if (!sensitivity.ok()) return fail(sensitivity.message(), 2);
  // Volts per (m/s^2): the generator speaks m/s^2.
  const double volts_per_ms2 =
      sensitivity->volts_per_unit / estimators::ToSiFactor(sensitivity->unit);

  std::vector<std::string> sensors = opt->Values("--sensor");
  const std::string prefix = opt->Value("--sensor-prefix").value_or("FEED-");
  for (long long i = 1; i <= *sensor_count; ++i) {
    char name[32];
    std::snprintf(name, sizeof name, "%04lld", i);
    sensors.push_back(prefix + name);
  }
  if (sensors.empty()) sensors.push_back("LK-P101-DE-H");

  std::vector<double> recorded;
  double sample_rate = *rate;
  if (auto file = opt->Value("--file")) {
    ReadOptions read;
    read.channel = static_cast<std::size_t>(*channel);
    read.sample_rate_hz = opt->Has("--rate") ? *rate : 0.0;
    auto recording = ReadRecording(*file, read);
    if (!recording.ok()) return fail(recording.message(), 1);
    recorded = std::move(recording->samples);
    sample_rate = recording->sample_rate_hz;
  }

  auto transport = opt->Has("--udp") ? FrameSender::Transport::kUdp : FrameSender::Transport::kTcp;
  auto sender = FrameSender::Connect(transport, host, static_cast<std::uint16_t>(*port));
  if (!sender.ok()) return fail(sender.message(), 1);

  auto start_ns = opt->Integer("--start-ns",
                               std::chrono::duration_cast<std::chrono::nanoseconds>(
                                   std::chrono::system_clock::now().time_since_epoch())
                                   .count(),
                               0, std::numeric_limits<long long>::max());
  if (!start_ns.ok()) return fail(start_ns.message(), 2);

  // Signals made up front (--distinct-signals): sensor i sends signal i mod K.
  std::vector<std::vector<double>> made(static_cast<std::size_t>(*distinct));
  for (std::size_t k = 0; k < made.size(); ++k) {
    PumpSignalSpec spec;
    spec.sample_rate_hz = sample_rate;
    spec.defect_impact_m_s2 = *defect;
    spec.seed = 1000 + k;
    auto generator = PumpSignalGenerator::Create(spec);
    if (!generator.ok()) return fail(generator.message(), 2);
    made[k].resize(static_cast<std::size_t>(*seconds * sample_rate));
    generator->Generate(made[k]);
    if (!engineering) {
      for (double& v : made[k]) v *= volts_per_ms2;
    }
  }
  std::vector<Feed> feeds;
  for (std::size_t i = 0; i < sensors.size(); ++i) {
    Feed feed;
    feed.stream = std::make_unique<SensorStream>(
        sensors[i], sample_rate, *start_ns, format, engineering ? 500.0 : 10.0,
        engineering ? ScaleUnit::kEngineering : ScaleUnit::kVolts);
    if (!made.empty()) {
      feed.recording = &made[i % made.size()];
    } else if (recorded.empty()) {
      PumpSignalSpec spec;
      spec.sample_rate_hz = sample_rate;
      spec.defect_impact_m_s2 = *defect;
      spec.seed = 1000 + i;
      auto generator = PumpSignalGenerator::Create(spec);
      if (!generator.ok()) return fail(generator.message(), 2);
      feed.generator = std::make_unique<PumpSignalGenerator>(std::move(generator).value());
    } else {
      feed.recording = &recorded;
    }
    feeds.push_back(std::move(feed));
  }

  const std::size_t total_per_sensor =
      recorded.empty() ? static_cast<std::size_t>(*seconds * sample_rate) : recorded.size();
  const std::size_t per_frame = static_cast<std::size_t>(*frame_samples);
  std::vector<double> block(per_frame);
  std::uint64_t frames_sent = 0, bytes_sent = 0;
  const auto began = std::chrono::steady_clock::now();
  for (std::size_t sent = 0; sent < total_per_sensor; sent += per_frame) {
    const std::size_t n = std::min(per_frame, total_per_sensor - sent);
    for (auto& feed : feeds) {
      std::span<double> out(block.data(), n);
      if (feed.generator) {
        feed.generator->Generate(out);
      } else {
        std::copy_n(feed.recording->begin() + static_cast<std::ptrdiff_t>(sent), n, out.begin());
      }
      if (!engineering && feed.generator) {
        for (double& v : out) v *= volts_per_ms2;
      }
      auto frame = feed.stream->NextFrame(out);
      if (!frame.ok()) return fail(frame.message(), 1);
      if (Status s = (*sender)->Send(*frame); !s.ok()) {
        return fail("after " + std::to_string(frames_sent) + " frames: " + s.message(), 1);
      }
      ++frames_sent;
      bytes_sent += frame->size();
    }
    if (opt->Has("--realtime")) {
      const auto due = began + std::chrono::nanoseconds(static_cast<std::int64_t>(
                                   static_cast<double>(sent + n) * 1e9 / sample_rate));
      std::this_thread::sleep_until(due);
    }
  }
  (*sender)->Close();
  const double elapsed =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - began).count();
  const double signal_seconds = static_cast<double>(total_per_sensor) / sample_rate;
  std::printf(
      "sent %llu frames (%.1f MB) for %zu sensors, %.1f s of signal each, in %.2f s "
      "(%.1fx real time)\n",
      static_cast<unsigned long long>(frames_sent), static_cast<double>(bytes_sent) / 1e6,
      sensors.size(), signal_seconds, elapsed, elapsed > 0 ? signal_seconds / elapsed : 0.0);
  return 0;
}

}  // namespace spinward::daemon
