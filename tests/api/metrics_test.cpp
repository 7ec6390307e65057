#include "api/metrics.h"

#include <doctest/doctest.h>

#include <cstdlib>

#include "api/mqtt_publisher.h"
#include "test_util.h"

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE("FormatMetrics in OpenMetrics follows the OpenMetrics 1.0 text rules") {
    IngestStats stats({"garage"});
    stats.received = 12;
    stats.refused[static_cast<int>(RefusalReason::kBadTag)] = 3;
    MetricsSnapshot snapshot;
    snapshot.ingest = &stats;
    snapshot.database_bytes = 4096;
    snapshot.heap_in_use_bytes = 3'000'000;
    snapshot.sqlite_memory_bytes = 1'250'000;
    snapshot.live = {{"dryer \"new\"", "consumption", 4800}, {"solar", "export", 1234.5}};
    const std::string text = FormatMetrics(snapshot, MetricsFormat::kOpenMetrics);

    // tests/reference/data/http/NOTES.md (OpenMetrics 1.0): ends with "# EOF"; counters are
    // sampled as <family>_total; TYPE before UNIT before HELP; label values escape '"'.
    CHECK(text.size() > 6);
    CHECK(text.substr(text.size() - 6) == "# EOF\n");
    CHECK(text.find("# TYPE ampledger_datagrams_received counter\n"
                    "# HELP ampledger_datagrams_received UDP datagrams read from the socket.\n"
                    "ampledger_datagrams_received_total 12\n") != std::string::npos);
    CHECK(text.find("ampledger_datagrams_refused_total{reason=\"bad_tag\"} 3\n") !=
          std::string::npos);
    CHECK(text.find("# TYPE ampledger_database_bytes gauge\n# UNIT ampledger_database_bytes "
                    "bytes\n") != std::string::npos);
    CHECK(text.find("# UNIT ampledger_heap_in_use_bytes bytes\n# HELP ampledger_heap_in_use_bytes "
                    "Heap memory allocated and not freed (malloc's count).\n"
                    "ampledger_heap_in_use_bytes 3000000\n") != std::string::npos);
    CHECK(text.find("ampledger_heap_free_bytes 0\n") != std::string::npos);
    CHECK(text.find("# TYPE ampledger_sqlite_memory_bytes gauge\n# UNIT ampledger_sqlite_memory_"
                    "bytes bytes\n") != std::string::npos);
    CHECK(text.find("ampledger_sqlite_memory_bytes 1250000\n") != std::string::npos);
    CHECK(text.find("ampledger_circuit_power_watts{circuit=\"dryer \\\"new\\\"\","
                    "direction=\"consumption\"} 4800.0\n") != std::string::npos);
    CHECK(text.find("{circuit=\"solar\",direction=\"export\"} 1234.5\n") != std::string::npos);
    CHECK(text.find('\r') == std::string::npos);

    // The Prometheus text format 0.0.4 (prometheus.io "Exposition formats", from memory of
    // that page): a counter's TYPE and HELP name the sample itself, no UNIT, no "# EOF".
    const std::string plain = FormatMetrics(snapshot, MetricsFormat::kPrometheusText);
    CHECK(plain.find("# TYPE ampledger_datagrams_received_total counter\n"
                     "# HELP ampledger_datagrams_received_total UDP datagrams read from the "
                     "socket.\nampledger_datagrams_received_total 12\n") != std::string::npos);
    CHECK(plain.find("# TYPE ampledger_database_bytes gauge\n# HELP ampledger_database_bytes ")
          != std::string::npos);
    CHECK(plain.find("# UNIT") == std::string::npos);
    CHECK(plain.find("# EOF") == std::string::npos);
  }
  TEST_CASE("FormatMetrics adds the MQTT publisher's families when it runs") {
    IngestStats stats({"garage"});
    MetricsSnapshot snapshot;
    snapshot.ingest = &stats;
    CHECK(FormatMetrics(snapshot, MetricsFormat::kOpenMetrics).find("mqtt") ==
          std::string::npos);  // [mqtt] off: no families
    MqttOutbox outbox(1, 2);
    for (int i = 0; i < 5; ++i) outbox.PushEvent({"t", "{}", 1, false});
    MqttStats mqtt;
    mqtt.connected = true;
    mqtt.published = 41;
    mqtt.connects = 2;
    mqtt.connect_failures = 7;
    mqtt.disconnects = 1;
    mqtt.outbox = &outbox;
    snapshot.mqtt = &mqtt;
    const std::string open = FormatMetrics(snapshot, MetricsFormat::kOpenMetrics);
    CHECK(open.find("# TYPE ampledger_mqtt_connected gauge\n") != std::string::npos);
    CHECK(open.find("\nampledger_mqtt_connected 1\n") != std::string::npos);
    CHECK(open.find("\nampledger_mqtt_published_total 41\n") != std::string::npos);
    CHECK(open.find("\nampledger_mqtt_connects_total 2\n") != std::string::npos);
    CHECK(open.find("\nampledger_mqtt_connect_failures_total 7\n") != std::string::npos);
    CHECK(open.find("\nampledger_mqtt_disconnects_total 1\n") != std::string::npos);
    CHECK(open.find("\nampledger_mqtt_events_dropped_total 3\n") != std::string::npos);
    CHECK(open.find("\nampledger_mqtt_events_waiting 2\n") != std::string::npos);
    CHECK(open.substr(open.size() - 6) == "# EOF\n");

    // promtool (the Prometheus project's checker, Debian package prometheus) lints the
    // Prometheus text format: names, types, help; it prints nothing when all is well.
    testing::TempDir dir;
    testing::WriteFile(dir.File("metrics.txt"),
                       FormatMetrics(snapshot, MetricsFormat::kPrometheusText));
    const std::string command = "promtool check metrics < '" + dir.File("metrics.txt") +
                                "' > '" + dir.File("report.txt") + "' 2>&1";
    CHECK(std::system(command.c_str()) == 0);
    CHECK(testing::ReadFile(dir.File("report.txt")) == "");
  }
}

}  // namespace
}  // namespace ampledger
