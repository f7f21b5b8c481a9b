// TCP and UDP listeners for the frame protocol (docs/protocol.md).
//
// TCP: a stream of frames per connection, many connections and sensors at once. A malformed frame
// closes its connection (the stream has no trustworthy boundary left); a point that falls behind
// pauses reading of that socket until its queue has room (back-pressure to the sender's buffer).
// UDP: one frame per datagram; a malformed datagram is dropped; a point that is behind means the
// datagram is dropped and counted. Both: bind 127.0.0.1 by default, optional allow-list of peers.
// Both run on an io_context the owner supplies through NetworkThreads (Asio is kept out of
// headers). Thread-safety: Start/Stop from one thread; counters readable from any.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "spinward/daemon/sample_source.h"
#include "spinward/daemon/source_counters.h"

namespace spinward::daemon {

struct ListenerOptions {
  enum class Transport { kTcp, kUdp };
  Transport transport = Transport::kTcp;
  std::string address = "127.0.0.1";
  std::uint16_t port = 0;  // 0: any free port (see BoundPort)
  std::size_t max_connections = 64;
  std::chrono::milliseconds idle_timeout{std::chrono::seconds(60)};
  std::size_t max_frame_bytes = std::size_t{1} << 20;
  std::vector<std::string> allowed_peers;  // IP addresses; empty allows any
};

// Owns the io_context and the threads that run it, shared by all listeners.
class NetworkThreads {
 public:
  explicit NetworkThreads(std::size_t threads = 1);
  ~NetworkThreads();
  NetworkThreads(const NetworkThreads&) = delete;
  NetworkThreads& operator=(const NetworkThreads&) = delete;
  void Start();
  void Stop();
  void* context();  // the boost::asio::io_context, for listener implementations only

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

struct TcpSession;  // one TCP connection; private to the implementation

using SourceReporter = std::function<void(const std::string& source, const std::string& message)>;

class NetworkListener final : public SampleSource {
 public:
  NetworkListener(NetworkThreads& threads, ListenerOptions options, BlockConsumer& consumer,
                  SourceReporter report = {});
  ~NetworkListener() override;

  std::string Describe() const override;
  Status Start() override;
  void Stop() override;
  std::uint16_t BoundPort() const;
  const SourceCounters& counters() const;

 private:
  friend struct TcpSession;
  struct Impl;
  std::shared_ptr<Impl> impl_;
};

// Turns a decoded frame into the block a point pipeline takes.
SampleBlock BlockFromFrame(Frame&& frame);

}  // namespace spinward::daemon
