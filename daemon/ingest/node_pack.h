// daemon/ingest/node_pack.h
// A resolved SenML pack read as one of our nodes' datagrams (daemon/PROTOCOL.md): the node id
// from the base name `<node>/`, the `boot` and `seq` records, the reporting interval (ut of the
// seq record), and per channel and interval a ChannelSample in SI units. pack_encoder.h writes
// the reverse. Pure functions; any thread.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "config/config.h"
#include "daemon/ingest/refusal.h"
#include "daemon/ingest/senml.h"
#include "daemon/metering/reading.h"

namespace ampledger {

// Bounds of the reporting interval and of a record's own ut (seconds).
inline constexpr double kMaxIntervalSeconds = 86400;

struct NodePack {
  std::string node;                    // the node id: the base name without its trailing "/"
  std::uint32_t boot = 0;              // boot counter: grows by one each time the node starts
  std::uint32_t seq = 0;               // datagram counter within the boot
  std::int32_t interval_ms = 0;        // reporting interval (ut of the seq record), > 0
  std::vector<ChannelSample> samples;  // one per (channel, end time), ordered by time, channel
};

// Reads `pack` as a node datagram. `now` is the reception time; `limits` gives the clock
// window [now - resend_horizon_seconds, now + max_future_seconds] every sample must end in.
// Refusals: kMalformed, kUnknownRecord, kMixedNodes, kUnitMismatch, kOutOfRange, kClock.
DecodeResult<NodePack> InterpretNodePack(const SenmlPack& pack, UnixMs now,
                                         const IngestConfig& limits);

}  // namespace ampledger
