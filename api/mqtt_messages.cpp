#include "api/mqtt_messages.h"

#include <nlohmann/json.hpp>

#include "api/event_json.h"
#include "api/rfc3339.h"

namespace ampledger {

using nlohmann::json;

std::vector<CircuitLive> SumCircuitLive(const Config& config,
                                        const std::vector<ChannelReading>& latest) {
  std::vector<std::optional<CircuitLive>> by_circuit(config.circuits.size());
  for (const ChannelReading& reading : latest) {
    if (reading.channel < 0 || reading.channel >= config.ChannelCount()) continue;
    const int circuit = config.CircuitOfChannel(reading.channel);
    if (circuit < 0) continue;
    std::optional<CircuitLive>& live = by_circuit[circuit];
    if (!live) live = CircuitLive{circuit};
    live->watts += reading.real_watts;
    live->va += reading.apparent_va;
    live->amps += reading.amps;
    live->volts = reading.volts;
    live->quality = Worse(live->quality, reading.quality);
    if (reading.end_ms > live->reading_end_ms) {
      live->reading_end_ms = reading.end_ms;
      live->duration_ms = reading.duration_ms;
    }
  }
  std::vector<CircuitLive> result;
  for (const std::optional<CircuitLive>& live : by_circuit) {
    if (live) result.push_back(*live);
  }
  return result;
}

std::string MqttLiveTopic(const std::string& prefix, const std::string& circuit_id) {
  return prefix + "/circuit/" + circuit_id + "/power";
}

std::string MqttEventTopic(const std::string& prefix, const StoredEvent& event) {
  // "circuit:laundry-dryer" -> ".../circuit/laundry-dryer"
  std::string subject = event.subject;
  const std::size_t colon = subject.find(':');
  if (colon != std::string::npos) subject[colon] = '/';
  return prefix + "/event/" + event.kind + "/" + subject;
}

MqttMessage LiveMessage(const Config& config, const LocalTime& zone, const CircuitLive& live) {
  const CircuitConfig& circuit = config.circuits[live.circuit];
  json body = {{"circuit", circuit.id},
               {"name", circuit.name},
               {"direction", DirectionName(circuit.direction)},
               {"watts", live.watts},
               {"va", live.va},
               {"amps", live.amps},
               {"volts", live.volts},
               {"quality", QualityName(live.quality)},
               {"interval_s", live.duration_ms / 1000.0},
               {"reading_end", FormatLocalRfc3339(zone, live.reading_end_ms)},
               {"reading_end_ms", live.reading_end_ms},
               {"units",
                {{"watts", "W"}, {"va", "VA"}, {"amps", "A"}, {"volts", "V"},
                 {"interval_s", "s"}, {"reading_end_ms", "ms since 1970-01-01Z"}}}};
  return {MqttLiveTopic(config.mqtt.topic_prefix, circuit.id), body.dump(), 0, true};
}

MqttMessage EventMessage(const Config& config, const LocalTime& zone, const StoredEvent& event,
                         int qos) {
  return {MqttEventTopic(config.mqtt.topic_prefix, event),
          EventJson(config, zone, event).dump(), qos, false};
}

}  // namespace ampledger
