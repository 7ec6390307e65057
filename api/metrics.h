// api/metrics.h
// The /metrics exposition: ingest counters by outcome and refusal reason, readings stored, the
// writer's health, the database's size, the heap's, and live power per circuit as gauges. In the
// OpenMetrics 1.0 text format for scrapers that ask for it (Accept:
// application/openmetrics-text, as Prometheus does), else in the Prometheus text format 0.0.4
// that older scrapers and promtool read. The two differ only in how a counter's family is
// named (OpenMetrics: without "_total"), in UNIT lines and in the closing "# EOF".
// Pure formatting over values the caller collected; any thread.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "daemon/ingest/ingest_stats.h"

namespace ampledger {

struct MqttStats;  // api/mqtt_publisher.h

inline constexpr const char* kOpenMetricsContentType =
    "application/openmetrics-text; version=1.0.0; charset=utf-8";
inline constexpr const char* kPrometheusTextContentType =
    "text/plain; version=0.0.4; charset=utf-8";

enum class MetricsFormat { kOpenMetrics, kPrometheusText };

struct CircuitPower {
  std::string circuit;
  std::string direction;  // "consumption" | "export"
  double watts = 0;
};

struct MetricsSnapshot {
  const IngestStats* ingest = nullptr;
  std::uint64_t kernel_drops = 0;
  bool writer_healthy = true;
  std::uint64_t database_bytes = 0;  // the database file plus its WAL
  // malloc's own account (glibc mallinfo2): bytes handed out and not yet freed, and freed
  // bytes it keeps for reuse. Growth of the first is a leak; of the second, fragmentation.
  std::uint64_t heap_in_use_bytes = 0;
  std::uint64_t heap_free_bytes = 0;
  // Of heap in use, what SQLite holds: page caches fill up to each connection's cache_size as
  // queries touch pages, so this grows after start without being a leak.
  std::uint64_t sqlite_memory_bytes = 0;
  std::vector<CircuitPower> live;    // circuits with a reading in the last few minutes
  const MqttStats* mqtt = nullptr;   // the MQTT publisher's; nullptr = [mqtt] is off
};

// The whole exposition; in OpenMetrics it ends with "# EOF\n".
std::string FormatMetrics(const MetricsSnapshot& snapshot, MetricsFormat format);

}  // namespace ampledger
