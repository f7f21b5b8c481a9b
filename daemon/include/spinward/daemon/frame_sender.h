// The sending side of the frame protocol, as a data-acquisition box would do it: cuts one sensor's
// samples into frames (sequence numbers, first-sample times) and sends them over TCP or UDP.
// `spinward feed`, the demo, the tests and the benchmarks all send through here.
// Thread-safety: one sender per thread.
#pragma once

#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "spinward/daemon/frame.h"
#include "spinward/estimators/result.h"

namespace spinward::daemon {

// Keeps one sensor's stream state: the next sequence number and the time of the next sample.
class SensorStream {
 public:
  SensorStream(std::string sensor_id, double sample_rate_hz, std::int64_t start_ns,
               SampleFormat format = SampleFormat::kFloat32, double volts_full_scale = 10.0,
               ScaleUnit unit = ScaleUnit::kVolts);

  // Encodes the next frame from `samples` (volts, or engineering units) and advances the stream.
  Result<std::vector<std::uint8_t>> NextFrame(std::span<const double> samples);
  // Leaves out `count` samples (a lost stretch): the next frame's time and sequence jump.
  void Skip(std::size_t samples, std::uint64_t frames);
  std::int64_t next_sample_ns() const;
  const std::string& sensor_id() const { return metadata_.sensor_id; }

 private:
  FrameMetadata metadata_;
  SampleFormat format_;
  double full_scale_;
  std::uint64_t samples_sent_ = 0;
  std::int64_t start_ns_;
  std::vector<std::int16_t> i16_;
  std::vector<std::int32_t> i32_;
  std::vector<float> f32_;
};

// A blocking connection to a daemon's listener.
class FrameSender {
 public:
  enum class Transport { kTcp, kUdp };
  static Result<std::unique_ptr<FrameSender>> Connect(Transport transport, const std::string& host,
                                                      std::uint16_t port);
  ~FrameSender();
  Status Send(std::span<const std::uint8_t> frame);
  void Close();

 private:
  struct Impl;
  explicit FrameSender(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace spinward::daemon
