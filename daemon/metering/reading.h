// daemon/metering/reading.h
// The values that flow from ingest to storage. A ChannelSample is what a node sent for one
// channel and one interval, as decoded from SenML; a ChannelReading is the same interval after
// calibration and derivation (daemon/metering/derive.h), ready to store. Plain values; no I/O.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

namespace ampledger {

// Milliseconds since 1970-01-01T00:00:00Z (UTC, no leap seconds), the one time type in storage.
using UnixMs = std::int64_t;

constexpr UnixMs kMsPerSecond = 1000;
constexpr UnixMs kMsPerBucket = 15 * 60 * kMsPerSecond;  // rollup bucket: 15 minutes of UTC

// How a value was obtained. When values combine, the worst quality wins (the larger number).
enum class Quality : std::uint8_t {
  kMeasured = 0,   // the node measured real power (or sent a real-energy register)
  kDerived = 1,    // computed from measured quantities: apparent power from V_rms x I_rms
  kEstimated = 2,  // assumed: real power from apparent power x the circuit's assumed PF
};

inline Quality Worse(Quality a, Quality b) { return a > b ? a : b; }

// "measured", "derived" or "estimated": the name the API, exports and statements use.
inline const char* QualityName(Quality quality) {
  switch (quality) {
    case Quality::kMeasured: return "measured";
    case Quality::kDerived: return "derived";
    case Quality::kEstimated: return "estimated";
  }
  return "estimated";
}

// What a node sent for one channel over the interval [end_ms - duration_ms, end_ms), in SI
// units, before calibration. Any value may be missing; current alone is enough.
struct ChannelSample {
  std::string channel;  // the channel id, first part of the SenML record name
  UnixMs end_ms = 0;
  std::int32_t duration_ms = 0;
  std::optional<double> amps;                 // RMS current
  std::optional<double> volts;                // RMS voltage
  std::optional<double> real_watts;           // mean real power
  std::optional<double> apparent_va;          // mean apparent power
  std::optional<double> power_factor;
  std::optional<double> frequency_hz;
  std::optional<double> real_register_j;      // cumulative real energy since boot (J = W s)
  std::optional<double> apparent_register_j;  // cumulative apparent energy since boot (VA s)
};

// One channel's values for one interval [end_ms - duration_ms, end_ms), after calibration,
// noise floor and derivation: real and apparent power are always present, with their quality.
// `channel` is the channel's flat index in Config order (node by node, channel by channel).
struct ChannelReading {
  int channel = -1;
  std::uint32_t boot = 0;  // the node's boot counter; registers restart from zero at a new boot
  UnixMs end_ms = 0;
  std::int32_t duration_ms = 0;
  double amps = 0;         // RMS, after gain and noise floor
  double volts = 0;        // measured, or the circuit's nominal voltage
  bool volts_measured = false;
  double real_watts = 0;   // mean real power over the interval; >= 0 (export circuits too)
  double apparent_va = 0;  // mean apparent power; >= real_watts
  Quality quality = Quality::kMeasured;  // of real_watts
  std::optional<double> frequency_hz;
  std::optional<double> real_register_j;      // after gain
  std::optional<double> apparent_register_j;  // after gain
};

}  // namespace ampledger
