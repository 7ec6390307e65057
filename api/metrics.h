// api/metrics.h
// The /metrics exposition in the OpenMetrics 1.0 text format: ingest counters by outcome and
// refusal reason, readings stored, the writer's health, the database's size, and live power
// per circuit as gauges. Pure formatting over values the caller collected; any thread.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "daemon/ingest/ingest_stats.h"

namespace ampledger {

inline constexpr const char* kOpenMetricsContentType =
    "application/openmetrics-text; version=1.0.0; charset=utf-8";

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
  std::vector<CircuitPower> live;    // circuits with a reading in the last few minutes
};

// The whole exposition, ending with "# EOF\n".
std::string FormatOpenMetrics(const MetricsSnapshot& snapshot);

}  // namespace ampledger
