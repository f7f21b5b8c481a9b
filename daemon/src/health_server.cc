#include "spinward/daemon/health_server.h"

#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/post.hpp>
#include <boost/beast/core/flat_buffer.hpp>
#include <boost/beast/core/tcp_stream.hpp>
#include <boost/beast/http.hpp>
#include <chrono>
#include <optional>
#include <thread>
#include <utility>
#include <vector>

#include "metrics_text.h"
#include "spinward/daemon/json_lines_sink.h"
#include "thread_name.h"

namespace spinward::daemon {

namespace asio = boost::asio;
namespace beast = boost::beast;
namespace http = beast::http;
using asio::ip::tcp;

namespace {

// A scrape is a few hundred bytes of request; anything larger or slower is not a client we serve.
constexpr std::uint64_t kMaxRequestBodyBytes = 4096;
constexpr auto kRequestTimeout = std::chrono::seconds(10);

void AppendUint(std::string& out, std::uint64_t value) { out += std::to_string(value); }

std::string HealthJson(const HealthSnapshot& s) {
  std::string out = "{\"live\":true,\"ready\":";
  out += IsReady(s) ? "true" : "false";
  out += ",\"storage\":{\"writable\":";
  out += s.storage_writable ? "true" : "false";
  out += ",\"backlog_items\":";
  AppendUint(out, s.storage_backlog_items);
  out += "},\"broker\":";
  if (!s.messaging_configured) {
    out += "null";
  } else {
    out += "{\"connected\":";
    out += s.broker_connected ? "true" : "false";
    out += ",\"outbox_pending\":";
    AppendUint(out, s.outbox_pending);
    out += '}';
  }
  out += ",\"listeners\":[";
  for (std::size_t i = 0; i < s.listeners.size(); ++i) {
    if (i) out += ',';
    out += "{\"description\":";
    AppendJsonString(out, s.listeners[i].description);
    out += ",\"transport\":";
    out += s.listeners[i].tcp ? "\"tcp\"" : "\"udp\"";
    out += ",\"port\":";
    AppendUint(out, s.listeners[i].port);
    out += '}';
  }
  out += "],\"points\":";
  AppendUint(out, s.points.size());
  out += ",\"frames_received\":";
  AppendUint(out, s.sources.frames);
  out += ",\"bad_frames\":";
  AppendUint(out, s.sources.bad_frames);
  out += ",\"records\":";
  AppendUint(out, s.router.records);
  out += ",\"queue_depth_samples\":";
  AppendUint(out, s.router.queued_samples);
  out += '}';
  return out;
}

std::string PointsJson(const HealthSnapshot& s) {
  std::string out = "[";
  for (std::size_t i = 0; i < s.points.size(); ++i) {
    if (i) out += ',';
    out += "{\"id\":";
    AppendJsonString(out, s.points[i].id);
    out += ",\"state\":";
    if (s.points[i].state.empty()) {
      out += "null";
    } else {
      AppendJsonString(out, s.points[i].state);
    }
    out += '}';
  }
  out += ']';
  return out;
}

http::response<http::string_body> Respond(const http::request<http::string_body>& request,
                                          const HealthSource& source) {
  http::response<http::string_body> response;
  response.version(request.version());
  response.keep_alive(request.keep_alive());
  response.set(http::field::server, "spinward");
  auto text = [&](http::status status, std::string body, const char* type) {
    response.result(status);
    response.set(http::field::content_type, type);
    response.body() = std::move(body);
  };
  const std::string_view target(request.target().data(), request.target().size());
  const std::string_view path = target.substr(0, target.find('?'));
  const bool known = path == "/healthz" || path == "/metrics" || path == "/api/points";
  if (!known) {
    text(http::status::not_found, "not found: " + std::string(path) + "\n",
         "text/plain; charset=utf-8");
  } else if (request.method() != http::verb::get) {
    text(http::status::method_not_allowed,
         "method not allowed: " + std::string(request.method_string()) + " (GET only)\n",
         "text/plain; charset=utf-8");
    response.set(http::field::allow, "GET");
  } else if (path == "/metrics") {
    text(http::status::ok, RenderMetricsText(source.Snapshot()), kMetricsContentType);
  } else if (path == "/healthz") {
    text(http::status::ok, HealthJson(source.Snapshot()), "application/json");
  } else {
    text(http::status::ok, PointsJson(source.Snapshot()), "application/json");
  }
  response.prepare_payload();
  return response;
}

class Session : public std::enable_shared_from_this<Session> {
 public:
  Session(tcp::socket socket, std::shared_ptr<const HealthSource> source)
      : stream_(std::move(socket)), source_(std::move(source)) {}

  void Read() {
    parser_.emplace();
    parser_->body_limit(kMaxRequestBodyBytes);
    stream_.expires_after(kRequestTimeout);
    http::async_read(
        stream_, buffer_, *parser_,
        [self = shared_from_this()](beast::error_code ec, std::size_t) { self->OnRead(ec); });
  }

  void Close() {
    if (!stream_.socket().is_open()) return;
    beast::error_code ignored;
    stream_.socket().shutdown(tcp::socket::shutdown_send, ignored);
    stream_.close();
  }

 private:
  void OnRead(beast::error_code ec) {
    if (ec) {
      Close();  // end of stream, timeout or a request we will not parse
      return;
    }
    response_ = Respond(parser_->get(), *source_);
    http::async_write(stream_, response_,
                      [self = shared_from_this()](beast::error_code write_ec, std::size_t) {
                        if (write_ec || !self->response_.keep_alive()) {
                          self->Close();
                        } else {
                          self->Read();
                        }
                      });
  }

  beast::tcp_stream stream_;
  beast::flat_buffer buffer_;
  std::optional<http::request_parser<http::string_body>> parser_;
  http::response<http::string_body> response_;
  std::shared_ptr<const HealthSource> source_;
};

}  // namespace

bool IsReady(const HealthSnapshot& snapshot) {
  const bool sources = !snapshot.listeners.empty() || snapshot.drop_directory_watched;
  const bool broker = !snapshot.messaging_configured || snapshot.broker_connected;
  return sources && snapshot.storage_writable && broker;
}

Status HealthServerOptions::Validate() const {
  boost::system::error_code ec;
  asio::ip::make_address(address, ec);
  if (ec) return Status::Fail("health.address: not an IP address: '" + address + "'");
  return Status::Ok();
}

struct HealthServer::Impl {
  Impl(HealthServerOptions o, std::shared_ptr<const HealthSource> s)
      : options(std::move(o)), source(std::move(s)) {}
  HealthServerOptions options;
  std::shared_ptr<const HealthSource> source;
  // Declared before the acceptor: the acceptor must close before its io_context goes.
  asio::io_context io;
  tcp::acceptor acceptor{io};
  std::thread thread;
  std::uint16_t bound_port = 0;
  std::vector<std::weak_ptr<Session>> sessions;  // touched only on the server thread

  void Accept() {
    acceptor.async_accept([this](beast::error_code ec, tcp::socket socket) {
      if (ec == asio::error::operation_aborted || !acceptor.is_open()) return;
      if (!ec) {
        std::erase_if(sessions, [](const auto& s) { return s.expired(); });
        auto session = std::make_shared<Session>(std::move(socket), source);
        sessions.push_back(session);
        session->Read();
      }
      Accept();
    });
  }
};

HealthServer::HealthServer(HealthServerOptions options, std::shared_ptr<const HealthSource> source)
    : impl_(std::make_unique<Impl>(std::move(options), std::move(source))) {}
HealthServer::~HealthServer() { Stop(); }
HealthServer::HealthServer(HealthServer&&) noexcept = default;
HealthServer& HealthServer::operator=(HealthServer&& other) noexcept {
  if (this != &other) {
    Stop();
    impl_ = std::move(other.impl_);
  }
  return *this;
}

Status HealthServer::Start() {
  if (!impl_) return Status::Fail("health server: moved from");
  if (impl_->thread.joinable()) return Status::Fail("health server: already started");
  if (!impl_->source) return Status::Fail("health server: no health source given");
  if (Status valid = impl_->options.Validate(); !valid) return valid;
  const std::string where = impl_->options.address + ":" + std::to_string(impl_->options.port);
  boost::system::error_code ec;
  tcp::endpoint endpoint(asio::ip::make_address(impl_->options.address, ec), impl_->options.port);
  auto& acceptor = impl_->acceptor;
  if (!ec) acceptor.open(endpoint.protocol(), ec);
  if (!ec) acceptor.set_option(asio::socket_base::reuse_address(true), ec);
  if (!ec) acceptor.bind(endpoint, ec);
  if (!ec) acceptor.listen(asio::socket_base::max_listen_connections, ec);
  if (ec) {
    boost::system::error_code ignored;
    acceptor.close(ignored);
    return Status::Fail("health server: cannot listen on " + where + ": " + ec.message());
  }
  impl_->bound_port = acceptor.local_endpoint(ec).port();
  impl_->io.restart();
  impl_->Accept();
  impl_->thread = std::thread([impl = impl_.get()] {
    NameThisThread("spw-health");
    impl->io.run();
  });
  return Status::Ok();
}

void HealthServer::Stop() {
  if (!impl_ || !impl_->thread.joinable()) return;
  // Closing the acceptor and every open connection on the server thread cancels all pending
  // work, so run() returns by itself once the last handler has seen the cancellation.
  asio::post(impl_->io, [impl = impl_.get()] {
    boost::system::error_code ignored;
    impl->acceptor.close(ignored);
    for (auto& weak : impl->sessions)
      if (auto session = weak.lock()) session->Close();
    impl->sessions.clear();
  });
  impl_->thread.join();
}

std::uint16_t HealthServer::BoundPort() const { return impl_ ? impl_->bound_port : 0; }

}  // namespace spinward::daemon
