// daemon/metering/reading.h
// The values that flow from ingest to storage: one channel's reading for one interval, and the
// circuit interval derived from a datagram's channel readings. Plain values; no I/O.
#pragma once

#include <cstdint>
#include <optional>

namespace ampledger {

// Milliseconds since 1970-01-01T00:00:00Z (UTC, no leap seconds), the one time type in storage.
using UnixMs = std::int64_t;

constexpr UnixMs kMsPerSecond = 1000;
constexpr UnixMs kMsPerBucket = 15 * 60 * kMsPerSecond;  // rollup bucket: 15 minutes of UTC

// How a value was obtained. When values combine, the worst quality wins (the larger number).
enum class Quality : std::uint8_t {
  kMeasured = 0,   // the node measured real power (or sent an energy register)
  kDerived = 1,    // computed from measured quantities: apparent power from V_rms x I_rms
  kEstimated = 2,  // assumed: real power from apparent power x the circuit's assumed PF
};

inline Quality Worse(Quality a, Quality b) { return a > b ? a : b; }

// One channel's values for one interval [end_ms - duration_ms, end_ms), after calibration.
// `channel` is the channel's index in Config order (node by node, channel by channel).
struct ChannelReading {
  int channel = -1;
  UnixMs end_ms = 0;
  std::int32_t duration_ms = 0;
  double current_amps = 0;                       // RMS, after gain and noise floor
  std::optional<double> volts;                   // RMS, when the node measured it
  std::optional<double> real_watts;              // mean real power, when measured
  std::optional<double> apparent_va;             // mean apparent power, when measured
  std::optional<double> power_factor;
  std::optional<double> frequency_hz;
  std::optional<double> energy_register_joules;  // cumulative, from the SenML sum field
};

// One circuit's energy over one interval, derived from the channel readings of one datagram.
// Export circuits carry positive energy; the circuit's direction says it was exported.
struct CircuitInterval {
  int circuit = -1;  // index in Config::circuits
  UnixMs start_ms = 0;
  UnixMs end_ms = 0;
  double real_wh = 0;
  double apparent_vah = 0;
  double mean_watts = 0;  // real_wh over the interval, as power
  Quality quality = Quality::kMeasured;
};

}  // namespace ampledger
