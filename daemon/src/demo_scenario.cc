#include "demo_scenario.h"

#include <chrono>
#include <cmath>
#include <map>
#include <memory>
#include <thread>
#include <vector>

#include "spinward/daemon/frame_sender.h"
#include "spinward/estimators/units.h"

namespace spinward::daemon {
namespace {

constexpr std::int64_t kHourNs = 3600LL * 1'000'000'000LL;
constexpr double kVoltsPerG = 0.1;  // the demo site's sensors: 100 mV/g

}  // namespace

PumpSignalSpec DemoSignalFor(const std::string& point_id, int hour, int hours) {
  PumpSignalSpec spec;
  spec.seed = std::hash<std::string>{}(point_id) + static_cast<std::uint64_t>(hour);
  const double t =
      hours > 1 ? static_cast<double>(hour) / (hours - 1) : 0.0;  // 0 .. 1 over the day
  const bool p101 = point_id.rfind("P101", 0) == 0;
  const bool fan = point_id.rfind("F201", 0) == 0;
  if (fan) {
    spec.shaft_rpm = 980.0;
    spec.vane_count = 6;  // blades
    spec.one_x_mm_s = 2.6;
    spec.two_x_mm_s = 0.7;
    spec.vane_pass_mm_s = 0.5;
    spec.defect_impact_m_s2 = 0.3;
    spec.resonance_hz = 2600.0;
    return spec;
  }
  spec.one_x_mm_s = 1.9;
  spec.two_x_mm_s = 0.8;
  spec.defect_impact_m_s2 = 0.4;
  if (p101) {
    // The drive end worsens most; the other P-101 points see a share of it.
    const double share = point_id == "P101-DE-H" ? 1.0 : 0.55;
    spec.one_x_mm_s += share * 5.6 * t * t;  // accelerating rise, as wear feeds on itself
    spec.defect_impact_m_s2 += share * 14.0 * (std::exp(3.0 * t) - 1.0) / (std::exp(3.0) - 1.0);
  }
  return spec;
}

Status SendDemoDay(MonitoringService& service, const DemoScenarioOptions& options,
                   const std::function<void(int hour)>& progress) {
  std::uint16_t tcp_port = 0, udp_port = 0;
  for (const auto& listener : service.Listeners()) {
    (listener.tcp ? tcp_port : udp_port) = listener.port;
  }
  if (tcp_port == 0 || udp_port == 0)
    return Status::Fail("demo: the site needs a TCP and a UDP listener");

  struct Sender {
    std::string point_id;
    double rate = 0;
    std::unique_ptr<SensorStream> stream;
    FrameSender* link = nullptr;
  };
  auto tcp = FrameSender::Connect(FrameSender::Transport::kTcp, "127.0.0.1", tcp_port);
  if (!tcp.ok()) return tcp.status();
  auto udp = FrameSender::Connect(FrameSender::Transport::kUdp, "127.0.0.1", udp_port);
  if (!udp.ok()) return udp.status();

  std::vector<Sender> senders;
  for (const auto& point : service.site().points) {
    Sender s;
    s.point_id = point.id;
    s.rate = point.sample_rate_hz;
    s.stream = std::make_unique<SensorStream>(point.sensor, point.sample_rate_hz,
                                              options.day_start_ns, SampleFormat::kFloat32);
    s.link = point.machine == "F-201" ? udp->get() : tcp->get();
    senders.push_back(std::move(s));
  }

  std::vector<double> block(options.frame_samples);
  std::uint64_t frames_sent = 0;
  for (int hour = 0; hour < options.hours; ++hour) {
    for (auto& s : senders) {
      auto generator = PumpSignalGenerator::Create(DemoSignalFor(s.point_id, hour, options.hours));
      if (!generator.ok()) return generator.status();
      const auto total = static_cast<std::size_t>(options.seconds_per_hour * s.rate);
      for (std::size_t sent = 0; sent < total; sent += block.size()) {
        std::span<double> out(block.data(), std::min(block.size(), total - sent));
        generator->Generate(out);
        for (double& v : out) v = v / estimators::kStandardGravity * kVoltsPerG;
        auto frame = s.stream->NextFrame(out);
        if (!frame.ok()) return frame.status();
        if (Status sent_ok = s.link->Send(*frame); !sent_ok.ok()) return sent_ok;
        ++frames_sent;
      }
      // The box sleeps until the next hourly snapshot: time jumps, sequence numbers run on.
      const std::int64_t next = options.day_start_ns + (hour + 1) * kHourNs;
      const auto gap = static_cast<std::size_t>(
          std::llround(static_cast<double>(next - s.stream->next_sample_ns()) * s.rate / 1e9));
      s.stream->Skip(gap, 0);
    }
    // Let the daemon catch up each hour (every frame received and processed), so the fan's
    // datagrams never meet a full queue.
    const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(10);
    while (service.Sources().frames < frames_sent && std::chrono::steady_clock::now() < deadline) {
      std::this_thread::sleep_for(std::chrono::milliseconds(2));
    }
    service.Drain();
    if (progress) progress(hour);
  }
  return Status::Ok();
}

}  // namespace spinward::daemon
