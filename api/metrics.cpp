#include "api/metrics.h"

#include <cmath>
#include <cstdio>

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

void Family(std::string& out, const char* name, const char* type, const char* help,
            const char* unit = nullptr) {
  out += std::string("# TYPE ") + name + " " + type + "\n";
  if (unit) out += std::string("# UNIT ") + name + " " + unit + "\n";
  out += std::string("# HELP ") + name + " " + help + "\n";
}

void Counter(std::string& out, const char* name, const char* help, std::uint64_t value) {
  Family(out, name, "counter", help);
  out += std::string(name) + "_total " + std::to_string(value) + "\n";
}

}  // namespace

std::string FormatOpenMetrics(const MetricsSnapshot& snapshot) {
  const IngestStats& ingest = *snapshot.ingest;
  std::string out;
  Counter(out, "ampledger_datagrams_received", "UDP datagrams read from the socket.",
          ingest.received.load());
  Counter(out, "ampledger_datagrams_stored", "Datagrams whose readings were committed.",
          ingest.stored.load());
  Counter(out, "ampledger_datagrams_duplicate",
          "Datagrams already stored, acknowledged again without storing.",
          ingest.duplicates.load());
  Family(out, "ampledger_datagrams_refused", "counter", "Datagrams refused, by reason.");
  for (int reason = 0; reason < kRefusalReasonCount; ++reason) {
    out += std::string("ampledger_datagrams_refused_total{reason=\"") +
           EscapeLabel(RefusalName(static_cast<RefusalReason>(reason))) + "\"} " +
           std::to_string(ingest.refused[reason].load()) + "\n";
  }
  Counter(out, "ampledger_datagrams_kernel_dropped",
          "Datagrams the kernel dropped because the receive buffer was full.",
          snapshot.kernel_drops);
  Counter(out, "ampledger_write_failures", "Datagrams the writer could not store (no ack sent).",
          ingest.write_failures.load());
  Counter(out, "ampledger_acks_sent", "Acknowledgements sent to nodes.", ingest.acks_sent.load());
  Counter(out, "ampledger_readings_stored", "Channel readings committed.",
          ingest.readings_stored.load());

  Family(out, "ampledger_writer_healthy", "gauge",
         "1 while the writer accepts readings; 0 after an error stopped it (see /v1/health).");
  out += std::string("ampledger_writer_healthy ") + (snapshot.writer_healthy ? "1" : "0") + "\n";
  Family(out, "ampledger_database_bytes", "gauge", "Size of the database file and its WAL.",
         "bytes");
  out += "ampledger_database_bytes " + std::to_string(snapshot.database_bytes) + "\n";

  Family(out, "ampledger_circuit_power_watts", "gauge",
         "Latest mean real power per circuit (export circuits: power exported).", "watts");
  for (const CircuitPower& power : snapshot.live) {
    out += "ampledger_circuit_power_watts{circuit=\"" + EscapeLabel(power.circuit) +
           "\",direction=\"" + EscapeLabel(power.direction) + "\"} " + Float(power.watts) + "\n";
  }
  out += "# EOF\n";
  return out;
}

}  // namespace ampledger
