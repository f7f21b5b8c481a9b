#include "mosquitto_transport.h"

#include <mosquitto.h>

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <chrono>
#include <condition_variable>
#include <cstring>
#include <fstream>
#include <mutex>
#include <thread>

#include "thread_name.h"

namespace spinward::daemon {
namespace {

using Clock = std::chrono::steady_clock;

void InitLibraryOnce() {
  static std::once_flag once;
  std::call_once(once, [] { mosquitto_lib_init(); });
}

std::string ErrorText(int rc) {
  if (rc == MOSQ_ERR_ERRNO) return std::strerror(errno);
  return mosquitto_strerror(rc);
}

// CONNACK codes that mean the credentials were refused: MQTT 3.1.1 section 3.2.2.3 (4 bad user
// name or password, 5 not authorized) and MQTT 5 section 3.2.2.2 (134, 135).
bool IsCredentialRefusal(int rc) { return rc == 4 || rc == 5 || rc == 134 || rc == 135; }

}  // namespace

struct MosquittoTransport::Impl {
  config::MessagingConfig config;
  std::string client_id;
  std::string password;
  Log log;
  mosquitto* mosq = nullptr;
  MqttCallbacks callbacks;
  std::thread thread;
  std::atomic<bool> connected{false};
  std::atomic<bool> session_ended{false};  // set by the CONNACK/disconnect callbacks
  std::atomic<bool> backoff_reset{false};
  std::mutex mutex;
  std::condition_variable wake;
  bool stop = false;
  MqttMessage farewell;
  int farewell_id = -1;
  std::atomic<bool> farewell_acked{false};
  std::string last_failure;
  Clock::time_point last_failure_logged{};

  std::string Broker() const { return config.host + ":" + std::to_string(config.port); }

  void Say(const std::string& level, const std::string& message) {
    if (log) log(level, "messaging: " + message);
  }

  // The same failure repeated (a broker down for an hour) is logged once, then every 10 minutes.
  void Failure(const std::string& why) {
    const auto now = Clock::now();
    if (why != last_failure || now - last_failure_logged > std::chrono::minutes(10)) {
      Say("error", why);
      last_failure = why;
      last_failure_logged = now;
    }
  }

  void Lost(const std::string& reason) {
    if (connected.exchange(false)) {
      Say("warn", "lost the connection to broker " + Broker() + ": " + reason +
                      "; alarms wait in the outbox");
      last_failure.clear();
      if (callbacks.on_disconnected) callbacks.on_disconnected(reason);
    }
  }

  static void OnConnect(mosquitto*, void* obj, int rc) {
    auto* self = static_cast<Impl*>(obj);
    if (rc == 0) {
      self->connected = true;
      self->backoff_reset = true;
      self->last_failure.clear();
      self->Say("info", "connected to broker " + self->Broker() + " (MQTT " +
                            std::string(config::ToString(self->config.protocol)) +
                            (self->config.tls ? ", TLS" : "") + ")");
      if (self->callbacks.on_connected) self->callbacks.on_connected();
      return;
    }
    const bool v5 = self->config.protocol == config::MqttProtocol::kV5;
    std::string why = "broker " + self->Broker() + " refused the connection: " +
                      (v5 ? mosquitto_reason_string(rc) : mosquitto_connack_string(rc));
    if (IsCredentialRefusal(rc)) {
      why += " (check messaging.username and messaging.password_file";
      why += self->config.username.empty() ? ": none given)"
                                           : " for user '" + self->config.username + "')";
    }
    self->Failure(why);
    self->session_ended = true;
  }

  static void OnDisconnect(mosquitto*, void* obj, int rc) {
    auto* self = static_cast<Impl*>(obj);
    self->session_ended = true;
    if (rc != 0) self->Lost(ErrorText(rc));
  }

  static void OnPublish(mosquitto*, void* obj, int mid) {
    auto* self = static_cast<Impl*>(obj);
    if (mid == self->farewell_id) self->farewell_acked = true;
    if (self->callbacks.on_acknowledged) self->callbacks.on_acknowledged(mid);
  }

  bool Stopping() {
    std::lock_guard lock(mutex);
    return stop;
  }

  // Waits `seconds` unless Stop comes first. Returns false on Stop.
  bool Sleep(double seconds) {
    std::unique_lock lock(mutex);
    return !wake.wait_for(lock, std::chrono::duration<double>(seconds), [&] { return stop; });
  }

  void Run() {
    double delay = config.reconnect_min_s;
    bool socket_open = false;
    bool first = true;
    while (!Stopping()) {
      if (!socket_open) {
        session_ended = false;
        int rc = first
                     ? mosquitto_connect(mosq, config.host.c_str(), config.port, config.keepalive_s)
                     : mosquitto_reconnect(mosq);
        if (rc != MOSQ_ERR_SUCCESS) {
          Failure("cannot reach broker " + Broker() + ": " + ErrorText(rc) + "; retrying in " +
                  std::to_string(static_cast<int>(delay)) + " s (monitoring and storage go on)");
          if (!Sleep(delay)) break;
          delay = std::min(delay * 2.0, config.reconnect_max_s);
          continue;
        }
        first = false;
        socket_open = true;
      }
      int rc = mosquitto_loop(mosq, 100, 1);
      if (backoff_reset.exchange(false)) delay = config.reconnect_min_s;
      if (rc != MOSQ_ERR_SUCCESS || session_ended.exchange(false)) {
        const std::string reason = rc != MOSQ_ERR_SUCCESS ? ErrorText(rc) : "session ended";
        if (connected) {
          Lost(reason);
        } else if (rc != MOSQ_ERR_SUCCESS && rc != MOSQ_ERR_CONN_REFUSED &&
                   rc != MOSQ_ERR_NO_CONN) {
          Failure("no session with broker " + Broker() + ": " + reason +
                  (config.tls ? " (check messaging.tls files and the broker's certificate)" : ""));
        }
        mosquitto_disconnect(mosq);
        socket_open = false;
        if (!Sleep(delay)) break;
        delay = std::min(delay * 2.0, config.reconnect_max_s);
      }
    }
    if (connected) {
      int id = 0;
      if (mosquitto_publish(mosq, &id, farewell.topic.c_str(),
                            static_cast<int>(farewell.payload.size()), farewell.payload.data(),
                            farewell.qos, farewell.retain) == MOSQ_ERR_SUCCESS) {
        farewell_id = id;
        const auto until = Clock::now() + std::chrono::seconds(3);
        while (!farewell_acked && Clock::now() < until) {
          if (mosquitto_loop(mosq, 50, 1) != MOSQ_ERR_SUCCESS) break;
        }
      }
      connected = false;
      mosquitto_disconnect(mosq);
      mosquitto_loop(mosq, 50, 1);
      Say("info", "disconnected from broker " + Broker());
    }
  }
};

MosquittoTransport::MosquittoTransport(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}

Result<std::unique_ptr<MosquittoTransport>> MosquittoTransport::Create(
    const config::MessagingConfig& config, std::string client_id, Log log) {
  InitLibraryOnce();
  auto impl = std::make_unique<Impl>();
  impl->config = config;
  impl->client_id = std::move(client_id);
  impl->log = std::move(log);
  if (!config.password_file.empty()) {
    std::ifstream in(config.password_file);
    if (!in) {
      return Error{"messaging.password_file '" + config.password_file +
                   "' cannot be read: " + std::strerror(errno)};
    }
    std::getline(in, impl->password);
    if (!impl->password.empty() && impl->password.back() == '\r') impl->password.pop_back();
  }
  impl->mosq = mosquitto_new(impl->client_id.c_str(), true, impl.get());
  if (impl->mosq == nullptr) return Error{"messaging: cannot create an MQTT client"};
  mosquitto_threaded_set(impl->mosq, true);
  mosquitto_int_option(
      impl->mosq, MOSQ_OPT_PROTOCOL_VERSION,
      config.protocol == config::MqttProtocol::kV5 ? MQTT_PROTOCOL_V5 : MQTT_PROTOCOL_V311);
  if (!config.username.empty()) {
    int rc =
        mosquitto_username_pw_set(impl->mosq, config.username.c_str(),
                                  config.password_file.empty() ? nullptr : impl->password.c_str());
    if (rc != MOSQ_ERR_SUCCESS) return Error{"messaging.username: " + ErrorText(rc)};
  }
  if (config.tls) {
    const auto& tls = *config.tls;
    int rc = mosquitto_tls_set(impl->mosq, tls.ca_file.c_str(), nullptr,
                               tls.cert_file.empty() ? nullptr : tls.cert_file.c_str(),
                               tls.key_file.empty() ? nullptr : tls.key_file.c_str(), nullptr);
    if (rc != MOSQ_ERR_SUCCESS) {
      return Error{"messaging.tls: cannot use ca_file '" + tls.ca_file + "'" +
                   (tls.cert_file.empty() ? "" : ", cert_file '" + tls.cert_file + "'") +
                   (tls.key_file.empty() ? "" : ", key_file '" + tls.key_file + "'") + ": " +
                   ErrorText(rc)};
    }
  }
  mosquitto_connect_callback_set(impl->mosq, &Impl::OnConnect);
  mosquitto_disconnect_callback_set(impl->mosq, &Impl::OnDisconnect);
  mosquitto_publish_callback_set(impl->mosq, &Impl::OnPublish);
  return std::unique_ptr<MosquittoTransport>(new MosquittoTransport(std::move(impl)));
}

MosquittoTransport::~MosquittoTransport() {
  Stop(impl_->farewell);
  mosquitto_destroy(impl_->mosq);
}

Status MosquittoTransport::Start(MqttCallbacks callbacks, const MqttMessage& will) {
  if (impl_->thread.joinable()) return Status::Fail("messaging: already started");
  int rc =
      mosquitto_will_set(impl_->mosq, will.topic.c_str(), static_cast<int>(will.payload.size()),
                         will.payload.data(), will.qos, will.retain);
  if (rc != MOSQ_ERR_SUCCESS) return Status::Fail("messaging: last will: " + ErrorText(rc));
  impl_->callbacks = std::move(callbacks);
  impl_->Say("info", "connecting to broker " + impl_->Broker() + " as '" + impl_->client_id + "'");
  impl_->thread = std::thread([impl = impl_.get()] {
    NameThisThread("spw-mqtt");
    impl->Run();
  });
  return Status::Ok();
}

Result<int> MosquittoTransport::Publish(const MqttMessage& message) {
  if (!impl_->connected) return Error{"not connected to broker " + impl_->Broker()};
  int id = 0;
  int rc = mosquitto_publish(impl_->mosq, &id, message.topic.c_str(),
                             static_cast<int>(message.payload.size()), message.payload.data(),
                             message.qos, message.retain);
  if (rc != MOSQ_ERR_SUCCESS) return Error{"publishing to " + message.topic + ": " + ErrorText(rc)};
  return id;
}

void MosquittoTransport::Stop(const MqttMessage& farewell) {
  {
    std::lock_guard lock(impl_->mutex);
    if (impl_->stop && !impl_->thread.joinable()) return;
    impl_->stop = true;
    impl_->farewell = farewell;
  }
  impl_->wake.notify_all();
  if (impl_->thread.joinable()) impl_->thread.join();
}

}  // namespace spinward::daemon
