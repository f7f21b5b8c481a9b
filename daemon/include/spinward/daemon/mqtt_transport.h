// The seam between the messaging logic and an MQTT client library: connect (and keep reconnecting),
// publish, and report CONNACKs, disconnections and acknowledgements as callbacks. The daemon uses
// MosquittoTransport (libmosquitto); tests of the publisher's logic use a fake.
// Thread-safety: Publish may be called from any thread after Start; callbacks arrive on the
// transport's own thread and must not call Stop.
#pragma once

#include <functional>
#include <string>

#include "spinward/estimators/result.h"

namespace spinward::daemon {

struct MqttMessage {
  std::string topic;
  std::string payload;
  int qos = 1;
  bool retain = false;
};

struct MqttCallbacks {
  // The broker accepted the session (CONNACK success).
  std::function<void()> on_connected;
  // The session ended or could not start; `reason` names the broker and the cause.
  std::function<void(const std::string& reason)> on_disconnected;
  // QoS 1: the broker's PUBACK for message `id` arrived. QoS 0: the message left the client.
  std::function<void(int id)> on_acknowledged;
};

class MqttTransport {
 public:
  virtual ~MqttTransport() = default;
  // Starts connecting in the background; reconnects with backoff until Stop. `will` is published
  // by the broker if the connection is lost without a clean goodbye.
  virtual Status Start(MqttCallbacks callbacks, const MqttMessage& will) = 0;
  // Queues a message; returns its id (acknowledged through on_acknowledged). Fails when not
  // connected, so nothing waits silently in the client library.
  virtual Result<int> Publish(const MqttMessage& message) = 0;
  // Publishes `farewell` (waiting briefly for its acknowledgement) if connected, disconnects
  // cleanly and joins the transport's thread.
  virtual void Stop(const MqttMessage& farewell) = 0;
};

}  // namespace spinward::daemon
