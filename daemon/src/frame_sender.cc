#include "spinward/daemon/frame_sender.h"

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/ip/udp.hpp>
#include <boost/asio/write.hpp>
#include <cmath>

#include "spinward/daemon/frame_codec.h"

namespace spinward::daemon {

namespace asio = boost::asio;

SensorStream::SensorStream(std::string sensor_id, double sample_rate_hz, std::int64_t start_ns,
                           SampleFormat format, double volts_full_scale, ScaleUnit unit)
    : format_(format), full_scale_(volts_full_scale), start_ns_(start_ns) {
  metadata_.sensor_id = std::move(sensor_id);
  metadata_.sample_rate_hz = sample_rate_hz;
  metadata_.scale_unit = unit;
  // Integer formats map the full scale onto the integer range, as an ADC does.
  if (format == SampleFormat::kInt16) metadata_.scale = full_scale_ / 32767.0;
  if (format == SampleFormat::kInt32) metadata_.scale = full_scale_ / 2147483647.0;
  if (format == SampleFormat::kFloat32) metadata_.scale = 1.0;
}

std::int64_t SensorStream::next_sample_ns() const {
  return start_ns_ + static_cast<std::int64_t>(std::llround(static_cast<double>(samples_sent_) *
                                                            1e9 / metadata_.sample_rate_hz));
}

void SensorStream::Skip(std::size_t samples, std::uint64_t frames) {
  samples_sent_ += samples;
  metadata_.sequence += frames;
}

Result<std::vector<std::uint8_t>> SensorStream::NextFrame(std::span<const double> samples) {
  metadata_.first_sample_utc_ns = next_sample_ns();
  Result<std::vector<std::uint8_t>> frame = Error{"unset"};
  switch (format_) {
    case SampleFormat::kInt16: {
      i16_.resize(samples.size());
      for (std::size_t i = 0; i < samples.size(); ++i) {
        const double counts =
            std::clamp(std::round(samples[i] / metadata_.scale), -32768.0, 32767.0);
        i16_[i] = static_cast<std::int16_t>(counts);
      }
      frame = EncodeFrame(metadata_, std::span<const std::int16_t>(i16_));
      break;
    }
    case SampleFormat::kInt32: {
      i32_.resize(samples.size());
      for (std::size_t i = 0; i < samples.size(); ++i) {
        const double counts =
            std::clamp(std::round(samples[i] / metadata_.scale), -2147483648.0, 2147483647.0);
        i32_[i] = static_cast<std::int32_t>(counts);
      }
      frame = EncodeFrame(metadata_, std::span<const std::int32_t>(i32_));
      break;
    }
    case SampleFormat::kFloat32: {
      f32_.resize(samples.size());
      for (std::size_t i = 0; i < samples.size(); ++i) f32_[i] = static_cast<float>(samples[i]);
      frame = EncodeFrame(metadata_, std::span<const float>(f32_));
      break;
    }
  }
  if (frame.ok()) {
    samples_sent_ += samples.size();
    metadata_.sequence += 1;
  }
  return frame;
}

struct FrameSender::Impl {
  asio::io_context io;
  Transport transport = Transport::kTcp;
  asio::ip::tcp::socket tcp{io};
  asio::ip::udp::socket udp{io};
  asio::ip::udp::endpoint udp_target;
};

FrameSender::FrameSender(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
FrameSender::~FrameSender() { Close(); }

Result<std::unique_ptr<FrameSender>> FrameSender::Connect(Transport transport,
                                                          const std::string& host,
                                                          std::uint16_t port) {
  auto impl = std::make_unique<Impl>();
  impl->transport = transport;
  boost::system::error_code ec;
  const std::string where = host + ":" + std::to_string(port);
  if (transport == Transport::kTcp) {
    asio::ip::tcp::resolver resolver(impl->io);
    auto endpoints = resolver.resolve(host, std::to_string(port), ec);
    if (ec) return Error{"tcp " + where + ": " + ec.message()};
    asio::connect(impl->tcp, endpoints, ec);
    if (ec) return Error{"tcp " + where + ": connect: " + ec.message()};
    impl->tcp.set_option(asio::ip::tcp::no_delay(true), ec);
  } else {
    asio::ip::udp::resolver resolver(impl->io);
    auto endpoints = resolver.resolve(host, std::to_string(port), ec);
    if (ec || endpoints.empty()) return Error{"udp " + where + ": " + ec.message()};
    impl->udp_target = *endpoints.begin();
    impl->udp.open(impl->udp_target.protocol(), ec);
    if (ec) return Error{"udp " + where + ": " + ec.message()};
  }
  return std::unique_ptr<FrameSender>(new FrameSender(std::move(impl)));
}

Status FrameSender::Send(std::span<const std::uint8_t> frame) {
  boost::system::error_code ec;
  if (impl_->transport == Transport::kTcp) {
    asio::write(impl_->tcp, asio::buffer(frame.data(), frame.size()), ec);
  } else {
    impl_->udp.send_to(asio::buffer(frame.data(), frame.size()), impl_->udp_target, 0, ec);
  }
  if (ec) return Status::Fail("send: " + ec.message());
  return Status::Ok();
}

void FrameSender::Close() {
  boost::system::error_code ignored;
  if (impl_->tcp.is_open()) {
    impl_->tcp.shutdown(asio::ip::tcp::socket::shutdown_both, ignored);
    impl_->tcp.close(ignored);
  }
  if (impl_->udp.is_open()) impl_->udp.close(ignored);
}

}  // namespace spinward::daemon
