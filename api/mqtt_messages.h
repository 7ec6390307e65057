// api/mqtt_messages.h
// The MQTT topics and payloads of our own layout (api/MQTT.md documents them):
//   <prefix>/status                                  retained  online / offline
//   <prefix>/circuit/<circuit id>/power              retained  live power of one circuit
//   <prefix>/event/<kind>/<subject type>/<subject id>   not retained  one alert event
// Ids are 1..64 of A-Z a-z 0-9 . _ - (config), so they never hold '/', '+' or '#'.
// Pure; any thread.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "api/mqtt_outbox.h"
#include "config/config.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/reading.h"
#include "storage/alert_queries.h"

namespace ampledger {

// One circuit's live values: its channels' newest readings summed (volts: the last
// channel's), the worst quality, the newest end.
struct CircuitLive {
  int circuit = -1;  // index into Config::circuits
  double watts = 0;
  double va = 0;
  double amps = 0;
  double volts = 0;
  Quality quality = Quality::kMeasured;
  UnixMs reading_end_ms = 0;
  std::int32_t duration_ms = 0;  // of the newest reading
};

// Per circuit with at least one reading in `latest` (ChannelReading::channel: flat index),
// in circuit order.
std::vector<CircuitLive> SumCircuitLive(const Config& config,
                                        const std::vector<ChannelReading>& latest);

std::string MqttLiveTopic(const std::string& prefix, const std::string& circuit_id);
std::string MqttEventTopic(const std::string& prefix, const StoredEvent& event);

// Retained, QoS 0: {"circuit", "name", "direction", "watts", "va", "amps", "volts",
// "quality", "interval_s", "reading_end" (RFC 3339 in `zone`), "reading_end_ms", "units"}.
MqttMessage LiveMessage(const Config& config, const LocalTime& zone, const CircuitLive& live);

// Not retained, QoS `qos`: the event as /v1/events and webhooks give it (api/event_json.h).
MqttMessage EventMessage(const Config& config, const LocalTime& zone, const StoredEvent& event,
                         int qos);

}  // namespace ampledger
