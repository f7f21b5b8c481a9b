// MqttTransport over libmosquitto (MQTT 3.1.1 or 5), with TLS and username/password from the
// site's messaging settings. One thread of its own runs the network loop and the reconnect
// backoff (doubling from reconnect_min_s to reconnect_max_s), so a failed TLS handshake or a
// refused login is retried like a refused TCP connection instead of ending the loop.
// Thread-safety: as MqttTransport.
#pragma once

#include <functional>
#include <memory>
#include <string>

#include "spinward/config/site_config.h"
#include "spinward/daemon/mqtt_transport.h"

namespace spinward::daemon {

class MosquittoTransport final : public MqttTransport {
 public:
  using Log = std::function<void(const std::string& level, const std::string& message)>;
  // Reads the password file here, so a missing file stops the start with its name.
  static Result<std::unique_ptr<MosquittoTransport>> Create(const config::MessagingConfig& config,
                                                            std::string client_id, Log log);
  ~MosquittoTransport() override;

  Status Start(MqttCallbacks callbacks, const MqttMessage& will) override;
  Result<int> Publish(const MqttMessage& message) override;
  void Stop(const MqttMessage& farewell) override;

 private:
  struct Impl;
  explicit MosquittoTransport(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace spinward::daemon
