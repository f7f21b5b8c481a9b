#!/usr/bin/python3
"""Independent MQTT reader for Spinward's messaging tests (docs/messaging.md).

Uses Eclipse Paho (Debian's python3-paho-mqtt), which shares no code with libmosquitto. Connects,
subscribes at QoS 1, touches READY_FILE once the broker has granted the subscription, then appends
one line per message to OUT_FILE:  topic <TAB> retain(0/1) <TAB> qos <TAB> payload  (payloads are
one-line JSON). Runs until terminated.

  mqtt_subscriber.py HOST PORT CLIENT_ID CLEAN(0/1) TOPIC OUT_FILE READY_FILE [USER PASSWORD]
"""
import sys

import paho.mqtt.client as mqtt


def main():
    host, port, client_id, clean, topic, out_file, ready_file = sys.argv[1:8]
    client = mqtt.Client(client_id=client_id, clean_session=clean == "1",
                         protocol=mqtt.MQTTv311)
    if len(sys.argv) > 9:
        client.username_pw_set(sys.argv[8], sys.argv[9])
    out = open(out_file, "a", encoding="utf-8")

    def on_connect(c, userdata, flags, rc):
        if rc != 0:
            print("connection refused:", mqtt.connack_string(rc), file=sys.stderr)
            sys.exit(1)
        c.subscribe(topic, qos=1)

    def on_subscribe(c, userdata, mid, granted):
        open(ready_file, "w").close()

    def on_message(c, userdata, msg):
        out.write("%s\t%d\t%d\t%s\n" % (msg.topic, 1 if msg.retain else 0, msg.qos,
                                        msg.payload.decode("utf-8")))
        out.flush()

    client.on_connect = on_connect
    client.on_subscribe = on_subscribe
    client.on_message = on_message
    client.connect(host, int(port), keepalive=30)
    client.loop_forever()


if __name__ == "__main__":
    main()
