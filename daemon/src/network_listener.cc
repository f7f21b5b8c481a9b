#include "spinward/daemon/network_listener.h"

#include <algorithm>
#include <array>
#include <boost/asio/executor_work_guard.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/ip/udp.hpp>
#include <boost/asio/post.hpp>
#include <boost/asio/steady_timer.hpp>
#include <chrono>
#include <deque>
#include <future>
#include <mutex>
#include <optional>
#include <set>
#include <thread>

#include "rate_limited_reporter.h"
#include "thread_name.h"

namespace spinward::daemon {

namespace asio = boost::asio;
using asio::ip::tcp;
using asio::ip::udp;

// ---------------------------------------------------------------------------------------------
// NetworkThreads

struct NetworkThreads::Impl {
  explicit Impl(std::size_t n)
      : count(std::max<std::size_t>(1, n)), guard(asio::make_work_guard(io)) {}
  std::size_t count;
  asio::io_context io;
  asio::executor_work_guard<asio::io_context::executor_type> guard;
  std::vector<std::thread> threads;
};

NetworkThreads::NetworkThreads(std::size_t threads) : impl_(std::make_unique<Impl>(threads)) {}
NetworkThreads::~NetworkThreads() { Stop(); }
void NetworkThreads::Start() {
  if (!impl_->threads.empty()) return;
  for (std::size_t i = 0; i < impl_->count; ++i)
    impl_->threads.emplace_back([this] {
      NameThisThread("spw-network");
      impl_->io.run();
    });
}
void NetworkThreads::Stop() {
  impl_->guard.reset();
  impl_->io.stop();
  for (auto& t : impl_->threads) t.join();
  impl_->threads.clear();
}
void* NetworkThreads::context() { return &impl_->io; }

SampleBlock BlockFromFrame(Frame&& frame) {
  SampleBlock block;
  block.sensor_id = std::move(frame.metadata.sensor_id);
  block.sample_rate_hz = frame.metadata.sample_rate_hz;
  block.first_sample_ns = frame.metadata.first_sample_utc_ns;
  block.sequence = frame.metadata.sequence;
  block.has_sequence = true;
  block.in_volts = frame.metadata.scale_unit == ScaleUnit::kVolts;
  block.samples = std::move(frame.samples);
  return block;
}

// ---------------------------------------------------------------------------------------------
// The listener

namespace {
constexpr auto kRetryDelay = std::chrono::milliseconds(2);  // while a point's queue is full
}

struct NetworkListener::Impl : std::enable_shared_from_this<NetworkListener::Impl> {
  Impl(asio::io_context& io_, ListenerOptions o, BlockConsumer& c, SourceReporter r)
      : io(io_),
        options(std::move(o)),
        consumer(c),
        report(std::move(r)),
        acceptor(io),
        socket(io) {}

  asio::io_context& io;
  ListenerOptions options;
  BlockConsumer& consumer;
  SourceReporter report;
  SourceCounters counters;
  RateLimitedReporter limiter;
  std::set<asio::ip::address> allowed;
  tcp::acceptor acceptor;
  udp::socket socket;
  std::array<std::uint8_t, 65536> datagram{};
  udp::endpoint sender;
  std::uint16_t bound_port = 0;
  std::atomic<bool> stopping{false};
  std::mutex sessions_mutex;
  std::set<std::shared_ptr<struct TcpSession>> sessions;

  std::string Name() const {
    return std::string(options.transport == ListenerOptions::Transport::kTcp ? "tcp " : "udp ") +
           options.address + ":" + std::to_string(bound_port);
  }

  void Report(const std::string& key, const std::string& message) {
    if (!report) return;
    std::uint64_t suppressed = 0;
    if (!limiter.Allow(key, std::chrono::steady_clock::now(), &suppressed)) return;
    report(Name(), suppressed ? message + " (" + std::to_string(suppressed) + " similar not logged)"
                              : message);
  }

  bool PeerAllowed(const asio::ip::address& address) const {
    if (allowed.empty()) return true;
    auto a =
        address.is_v6() && address.to_v6().is_v4_mapped()
            ? asio::ip::address(asio::ip::make_address_v4(asio::ip::v4_mapped, address.to_v6()))
            : address;
    return allowed.count(a) != 0;
  }

  void CountBad(const FrameError& error, const std::string& peer) {
    counters.bad_frames[static_cast<std::size_t>(error.reason)]++;
    Report(std::string("bad/") + std::string(FrameErrorReasonName(error.reason)),
           "bad frame from " + peer + ": " + std::string(FrameErrorReasonName(error.reason)) +
               ": " + error.message);
  }

  void DoAccept();
  void DoReceive();
  void Remove(const std::shared_ptr<TcpSession>& session) {
    std::lock_guard lock(sessions_mutex);
    sessions.erase(session);
  }
};

struct TcpSession : std::enable_shared_from_this<TcpSession> {
  TcpSession(std::shared_ptr<NetworkListener::Impl> l, tcp::socket s)
      : listener(std::move(l)),
        socket(std::move(s)),
        idle_timer(listener->io),
        retry_timer(listener->io),
        assembler(DecodeLimits{listener->options.max_frame_bytes}) {
    assembler.UseSpareStorage(
        [&consumer = listener->consumer] { return consumer.SpareSampleBuffer(); });
    boost::system::error_code ec;
    auto endpoint = socket.remote_endpoint(ec);
    peer = ec ? "unknown peer"
              : endpoint.address().to_string() + ":" + std::to_string(endpoint.port());
  }

  std::shared_ptr<NetworkListener::Impl> listener;
  tcp::socket socket;
  asio::steady_timer idle_timer;
  asio::steady_timer retry_timer;
  FrameAssembler assembler;
  std::array<std::uint8_t, 65536> buffer{};
  std::vector<Frame> frames;
  std::deque<SampleBlock> pending;  // decoded, waiting for room in their point's queue
  std::string peer;
  bool closed = false;

  void Start() {
    ArmIdleTimer();
    DoRead();
  }

  void ArmIdleTimer() {
    idle_timer.expires_after(listener->options.idle_timeout);
    idle_timer.async_wait([self = shared_from_this()](const boost::system::error_code& ec) {
      if (ec || self->closed) return;
      self->listener->counters.idle_closed++;
      self->listener->Report("idle", "closing idle connection from " + self->peer);
      self->Close();
    });
  }

  void DoRead() {
    if (closed) return;
    socket.async_read_some(asio::buffer(buffer),
                           [self = shared_from_this()](const boost::system::error_code& ec,
                                                       std::size_t n) { self->OnRead(ec, n); });
  }

  void OnRead(const boost::system::error_code& ec, std::size_t n) {
    if (closed) return;
    if (ec) {  // peer closed or reset: a normal end, unless it left a frame unfinished
      if (assembler.buffered_bytes() != 0 && !assembler.failed()) {
        listener->CountBad(
            FrameError{FrameErrorReason::kTruncated,
                       "connection ended " + std::to_string(assembler.buffered_bytes()) +
                           " bytes into a frame"},
            peer);
      }
      Close();
      return;
    }
    ArmIdleTimer();
    listener->counters.bytes += n;
    frames.clear();
    auto error = assembler.Feed(std::span<const std::uint8_t>(buffer.data(), n), &frames);
    for (auto& frame : frames) {
      listener->counters.frames++;
      pending.push_back(BlockFromFrame(std::move(frame)));
    }
    if (error) {
      listener->CountBad(*error, peer);
      listener->Report("close", "closing connection from " + peer + " after a malformed frame");
      // Blocks decoded before the bad frame are still good data: deliver them, then close.
      DeliverPending(/*then_close=*/true);
      return;
    }
    DeliverPending(false);
  }

  // Offers pending blocks in order; waits (not reading the socket) while a point's queue is full.
  void DeliverPending(bool then_close) {
    while (!pending.empty()) {
      auto sensor = pending.front().sensor_id;
      auto result = listener->consumer.Offer(std::move(pending.front()));
      if (result == OfferResult::kFull) {
        // Offer moves from the block only when it queues it, so the block is still whole here.
        listener->counters.paused_full++;
        listener->Report("full/" + sensor,
                         "point for sensor " + sensor + " is behind: pausing reads from " + peer);
        retry_timer.expires_after(kRetryDelay);
        retry_timer.async_wait(
            [self = shared_from_this(), then_close](const boost::system::error_code& ec) {
              if (!ec && !self->closed) self->DeliverPending(then_close);
            });
        return;
      }
      if (result == OfferResult::kUnknownSensor) {
        listener->counters.unknown_sensor++;
        listener->Report("unknown/" + sensor,
                         "frame from " + peer + " for unknown sensor '" + sensor + "' dropped");
      }
      pending.pop_front();
    }
    if (then_close) {
      Close();
    } else {
      DoRead();
    }
  }

  void Close() {
    if (closed) return;
    closed = true;
    boost::system::error_code ignored;
    idle_timer.cancel();
    retry_timer.cancel();
    socket.shutdown(tcp::socket::shutdown_both, ignored);
    socket.close(ignored);
    listener->Remove(shared_from_this());
  }
};

void NetworkListener::Impl::DoAccept() {
  acceptor.async_accept(
      [self = shared_from_this()](const boost::system::error_code& ec, tcp::socket peer_socket) {
        if (self->stopping) return;
        if (!ec) {
          boost::system::error_code endpoint_error;
          auto remote = peer_socket.remote_endpoint(endpoint_error);
          std::lock_guard lock(self->sessions_mutex);
          if (endpoint_error || !self->PeerAllowed(remote.address())) {
            self->counters.refused_peer++;
            self->Report("peer", "refused connection from " +
                                     (endpoint_error ? std::string("unknown peer")
                                                     : remote.address().to_string()) +
                                     ": not in allowed_peers");
            peer_socket.close();
          } else if (self->sessions.size() >= self->options.max_connections) {
            self->counters.refused_connections++;
            self->Report("max", "refused connection from " + remote.address().to_string() +
                                    ": max_connections " +
                                    std::to_string(self->options.max_connections) + " reached");
            peer_socket.close();
          } else {
            self->counters.connections++;
            auto session = std::make_shared<TcpSession>(self, std::move(peer_socket));
            self->sessions.insert(session);
            session->Start();
          }
        }
        self->DoAccept();
      });
}

void NetworkListener::Impl::DoReceive() {
  socket.async_receive_from(
      asio::buffer(datagram), sender,
      [self = shared_from_this()](const boost::system::error_code& ec, std::size_t n) {
        if (self->stopping) return;
        if (!ec) {
          self->counters.bytes += n;
          const std::string peer = self->sender.address().to_string();
          if (!self->PeerAllowed(self->sender.address())) {
            self->counters.refused_peer++;
            self->Report("peer", "dropped datagram from " + peer + ": not in allowed_peers");
          } else {
            auto decoded = DecodeFrame(std::span<const std::uint8_t>(self->datagram.data(), n),
                                       DecodeLimits{self->options.max_frame_bytes},
                                       self->consumer.SpareSampleBuffer());
            if (!decoded.ok()) {
              self->CountBad(decoded.error(), peer);
            } else {
              self->counters.frames++;
              auto block = BlockFromFrame(std::move(decoded).value());
              auto sensor = block.sensor_id;
              auto result = self->consumer.Offer(std::move(block));
              if (result == OfferResult::kFull) {
                self->counters.dropped_full++;
                self->Report("full/" + sensor,
                             "point for sensor " + sensor + " is behind: dropping its datagrams");
              } else if (result == OfferResult::kUnknownSensor) {
                self->counters.unknown_sensor++;
                self->Report("unknown/" + sensor,
                             "datagram for unknown sensor '" + sensor + "' dropped");
              }
            }
          }
        }
        self->DoReceive();
      });
}

NetworkListener::NetworkListener(NetworkThreads& threads, ListenerOptions options,
                                 BlockConsumer& consumer, SourceReporter report)
    : impl_(std::make_shared<Impl>(*static_cast<asio::io_context*>(threads.context()),
                                   std::move(options), consumer, std::move(report))) {}

NetworkListener::~NetworkListener() { Stop(); }

std::string NetworkListener::Describe() const { return impl_->Name(); }
std::uint16_t NetworkListener::BoundPort() const { return impl_->bound_port; }
const SourceCounters& NetworkListener::counters() const { return impl_->counters; }

Status NetworkListener::Start() {
  auto& o = impl_->options;
  boost::system::error_code ec;
  auto address = asio::ip::make_address(o.address, ec);
  if (ec) return Status::Fail("listener address '" + o.address + "': " + ec.message());
  for (const auto& peer : o.allowed_peers) {
    auto a = asio::ip::make_address(peer, ec);
    if (ec) return Status::Fail("allowed peer '" + peer + "': " + ec.message());
    impl_->allowed.insert(a);
  }
  const std::string where = o.address + ":" + std::to_string(o.port);
  if (o.transport == ListenerOptions::Transport::kTcp) {
    tcp::endpoint endpoint(address, o.port);
    auto& acceptor = impl_->acceptor;
    if (acceptor.open(endpoint.protocol(), ec); ec)
      return Status::Fail("tcp " + where + ": " + ec.message());
    acceptor.set_option(tcp::acceptor::reuse_address(true), ec);
    if (acceptor.bind(endpoint, ec); ec)
      return Status::Fail("tcp " + where + ": bind: " + ec.message());
    if (acceptor.listen(asio::socket_base::max_listen_connections, ec); ec) {
      return Status::Fail("tcp " + where + ": listen: " + ec.message());
    }
    impl_->bound_port = acceptor.local_endpoint().port();
    impl_->DoAccept();
  } else {
    udp::endpoint endpoint(address, o.port);
    auto& socket = impl_->socket;
    if (socket.open(endpoint.protocol(), ec); ec)
      return Status::Fail("udp " + where + ": " + ec.message());
    // A large receive buffer rides out short stalls without drops.
    socket.set_option(asio::socket_base::receive_buffer_size(8 << 20), ec);
    if (socket.bind(endpoint, ec); ec)
      return Status::Fail("udp " + where + ": bind: " + ec.message());
    impl_->bound_port = socket.local_endpoint().port();
    impl_->DoReceive();
  }
  return Status::Ok();
}

void NetworkListener::Stop() {
  if (impl_->stopping.exchange(true)) return;
  // Close on the io thread so no handler runs concurrently with the close.
  auto done = std::make_shared<std::promise<void>>();
  auto finished = done->get_future();
  asio::post(impl_->io, [impl = impl_, done] {
    boost::system::error_code ignored;
    impl->acceptor.close(ignored);
    impl->socket.close(ignored);
    std::set<std::shared_ptr<TcpSession>> sessions;
    {
      std::lock_guard lock(impl->sessions_mutex);
      sessions = impl->sessions;
    }
    for (auto& s : sessions) s->Close();
    done->set_value();
  });
  if (finished.wait_for(std::chrono::seconds(5)) != std::future_status::ready) {
    // The io threads are not running (already stopped): close directly.
    boost::system::error_code ignored;
    impl_->acceptor.close(ignored);
    impl_->socket.close(ignored);
  }
}

}  // namespace spinward::daemon
