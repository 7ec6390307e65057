// config/mqtt_config.h
// [mqtt]: optional publishing of live power and alert events to an MQTT broker (the topics
// and payloads: api/MQTT.md). Plain data, filled and validated by LoadConfig
// (config/mqtt_reader.h); ranges beside the fields are checked there.
#pragma once

#include <string>

namespace ampledger {

struct MqttConfig {
  bool enabled = false;  // off unless the file says enabled = true
  // The broker: a DNS name, an IPv4 address or an IPv6 address (without brackets); required
  // when enabled.
  std::string host;
  int port = 1883;  // 1..65535; 1883 is MQTT's registered port (IANA service name "mqtt")
  // The MQTT client id: an id (1..64 of A-Z a-z 0-9 . _ -). Default: "ampledger-" plus the
  // prefix's last level, cut to 64 characters. (MQTT 3.1.1 section 3.1.3.1 obliges a broker
  // to take only 1..23 letters and digits; mosquitto takes more.)
  std::string client_id;
  // Every topic starts with this: levels joined by '/', none empty, no '+', '#' or NUL, not
  // starting with '$' (MQTT 3.1.1 section 4.7). Default: "ampledger/" + the site name made
  // lowercase, with runs of anything but a-z 0-9 turned into one '-' (ReadMqtt sets it).
  std::string topic_prefix;
  // MQTT user name and password; both or neither. The password comes from `password` or the
  // first line of `password_file`. Secret: never logged or put in a message.
  std::string username;
  std::string password;
  int keepalive_seconds = 60;  // 5..3600: MQTT keep alive; the broker drops us after 1.5x
  int event_qos = 1;           // 0..2 for events; live values and status always use 0
  // Events waiting while the broker is away, at most (1..100000); beyond it the oldest waiting
  // event is dropped and counted. Live values never queue: each circuit keeps its newest.
  int queue_events = 1000;
  // How often live power is read and published, 1..3600 s ...
  double live_interval_seconds = 5;
  // ... skipping a circuit whose power moved less than this (0..1e6 W; 0 = every new
  // reading) since it was last published, unless that was live_refresh_seconds ago or more
  // (live_interval_seconds..86400).
  double live_change_watts = 0;
  double live_refresh_seconds = 300;
  // Reconnect delays: the first after a failure, doubling up to the last (1..3600 each,
  // first <= max).
  double reconnect_first_seconds = 1;
  double reconnect_max_seconds = 60;
};

}  // namespace ampledger
