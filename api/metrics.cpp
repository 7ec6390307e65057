#include "api/metrics.h"

#include <cmath>
#include <cstdio>

#include "api/mqtt_publisher.h"

namespace ampledger {

namespace {

// Label values escape backslash, double quote and newline (OpenMetrics 1.0, "Escaping").
std::string EscapeLabel(const std::string& value) {
  std::string escaped;
  for (char c : value) {
    if (c == '\\') escaped += "\\\\";
    else if (c == '"') escaped += "\\\"";
    else if (c == '\n') escaped += "\\n";
    else escaped += c;
  }
  return escaped;
}

// Floats carry a "." or an exponent; integers none (OpenMetrics 1.0, "Numbers").
std::string Float(double value) {
  if (!std::isfinite(value)) return value > 0 ? "+Inf" : (value < 0 ? "-Inf" : "NaN");
  char text[64];
  std::snprintf(text, sizeof text, "%.6g", value);
  std::string result = text;
  if (result.find_first_of(".e") == std::string::npos) result += ".0";
  return result;
}

// Writes the exposition's lines in either format.
class Exposition {
 public:
  explicit Exposition(MetricsFormat format) : format_(format) {}

  // The metadata lines of a family. A counter's samples are named <name>_total; OpenMetrics
  // names the family <name>, the Prometheus text format names it as its samples.
  void Family(const char* name, const char* type, const char* help, const char* unit = nullptr) {
    std::string family = name;
    if (format_ == MetricsFormat::kPrometheusText && std::string(type) == "counter") {
      family += "_total";
    }
    out_ += "# TYPE " + family + " " + type + "\n";
    if (unit && format_ == MetricsFormat::kOpenMetrics) {
      out_ += "# UNIT " + family + " " + unit + "\n";
    }
    out_ += "# HELP " + family + " " + help + "\n";
  }

  void Counter(const char* name, const char* help, std::uint64_t value) {
    Family(name, "counter", help);
    out_ += std::string(name) + "_total " + std::to_string(value) + "\n";
  }

  std::string& text() { return out_; }

  std::string Finish() {
    if (format_ == MetricsFormat::kOpenMetrics) out_ += "# EOF\n";
    return std::move(out_);
  }

 private:
  MetricsFormat format_;
  std::string out_;
};

// The MQTT publisher's families, present only when [mqtt] is enabled.
void FormatMqtt(const MqttStats& mqtt, Exposition& exposition) {
  std::string& out = exposition.text();
  exposition.Family("ampledger_mqtt_connected", "gauge",
                    "1 while connected to the MQTT broker, else 0.");
  out += std::string("ampledger_mqtt_connected ") + (mqtt.connected ? "1" : "0") + "\n";
  exposition.Counter("ampledger_mqtt_connects", "Connections the MQTT broker accepted.",
                     mqtt.connects.load());
  exposition.Counter("ampledger_mqtt_connect_failures",
                     "MQTT connection attempts refused, failed or unanswered.",
                     mqtt.connect_failures.load());
  exposition.Counter("ampledger_mqtt_disconnects", "Accepted MQTT connections lost later.",
                     mqtt.disconnects.load());
  exposition.Counter("ampledger_mqtt_published",
                     "MQTT messages sent (QoS 0) or acknowledged by the broker (QoS 1, 2).",
                     mqtt.published.load());
  exposition.Counter("ampledger_mqtt_events_dropped",
                     "Events dropped because mqtt.queue_events were already waiting.",
                     mqtt.outbox->events_dropped());
  exposition.Counter("ampledger_mqtt_live_superseded",
                     "Live values replaced by a newer one before they were sent.",
                     mqtt.outbox->live_superseded());
  exposition.Family("ampledger_mqtt_events_waiting", "gauge",
                    "Events waiting for the MQTT broker.");
  out += "ampledger_mqtt_events_waiting " + std::to_string(mqtt.outbox->events_waiting()) + "\n";
}

}  // namespace

std::string FormatMetrics(const MetricsSnapshot& snapshot, MetricsFormat format) {
  const IngestStats& ingest = *snapshot.ingest;
  Exposition exposition(format);
  std::string& out = exposition.text();
  exposition.Counter("ampledger_datagrams_received", "UDP datagrams read from the socket.",
                     ingest.received.load());
  exposition.Counter("ampledger_datagrams_stored", "Datagrams whose readings were committed.",
                     ingest.stored.load());
  exposition.Counter("ampledger_datagrams_duplicate",
                     "Datagrams already stored, acknowledged again without storing.",
                     ingest.duplicates.load());
  exposition.Family("ampledger_datagrams_refused", "counter", "Datagrams refused, by reason.");
  for (int reason = 0; reason < kRefusalReasonCount; ++reason) {
    out += std::string("ampledger_datagrams_refused_total{reason=\"") +
           EscapeLabel(RefusalName(static_cast<RefusalReason>(reason))) + "\"} " +
           std::to_string(ingest.refused[reason].load()) + "\n";
  }
  exposition.Counter("ampledger_datagrams_kernel_dropped",
                     "Datagrams the kernel dropped because the receive buffer was full.",
                     snapshot.kernel_drops);
  exposition.Counter("ampledger_write_failures",
                     "Datagrams the writer could not store (no ack sent).",
                     ingest.write_failures.load());
  exposition.Counter("ampledger_acks_sent", "Acknowledgements sent to nodes.",
                     ingest.acks_sent.load());
  exposition.Counter("ampledger_readings_stored", "Channel readings committed.",
                     ingest.readings_stored.load());

  exposition.Family(
      "ampledger_writer_healthy", "gauge",
      "1 while the writer accepts readings; 0 after an error stopped it (see /v1/health).");
  out += std::string("ampledger_writer_healthy ") + (snapshot.writer_healthy ? "1" : "0") + "\n";
  exposition.Family("ampledger_database_bytes", "gauge", "Size of the database file and its WAL.",
                    "bytes");
  out += "ampledger_database_bytes " + std::to_string(snapshot.database_bytes) + "\n";
  exposition.Family("ampledger_heap_in_use_bytes", "gauge",
                    "Heap memory allocated and not freed (malloc's count).", "bytes");
  out += "ampledger_heap_in_use_bytes " + std::to_string(snapshot.heap_in_use_bytes) + "\n";
  exposition.Family("ampledger_heap_free_bytes", "gauge",
                    "Freed heap memory malloc keeps for reuse rather than returning it.", "bytes");
  out += "ampledger_heap_free_bytes " + std::to_string(snapshot.heap_free_bytes) + "\n";
  exposition.Family("ampledger_sqlite_memory_bytes", "gauge",
                    "Of the heap in use, what SQLite holds (page caches, schemas, statements).",
                    "bytes");
  out += "ampledger_sqlite_memory_bytes " + std::to_string(snapshot.sqlite_memory_bytes) + "\n";

  exposition.Family("ampledger_circuit_power_watts", "gauge",
                    "Latest mean real power per circuit (export circuits: power exported).",
                    "watts");
  for (const CircuitPower& power : snapshot.live) {
    out += "ampledger_circuit_power_watts{circuit=\"" + EscapeLabel(power.circuit) +
           "\",direction=\"" + EscapeLabel(power.direction) + "\"} " + Float(power.watts) + "\n";
  }
  if (snapshot.mqtt != nullptr) FormatMqtt(*snapshot.mqtt, exposition);
  return exposition.Finish();
}

}  // namespace ampledger
