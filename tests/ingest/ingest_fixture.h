// tests/ingest/ingest_fixture.h
// Nodes and a pack of our invented demo scenario, shared by the ingest tests.
#pragma once

#include <string>
#include <vector>

#include "config/config.h"
#include "daemon/ingest/node_pack.h"

namespace ampledger::testing {

inline constexpr UnixMs kIngestNow = 1764633600000;  // 2025-12-02T00:00:00Z

inline std::string KeyString(const NodeConfig& node) {
  return std::string(node.key.begin(), node.key.end());
}

// "garage": COSE_Mac0 (the default), channels ct1 ct2. "shed": plain SenML, channel ct1.
inline std::vector<NodeConfig> IngestNodes() {
  NodeConfig garage;
  garage.id = "garage";
  for (int i = 0; i < 32; ++i) garage.key.push_back(static_cast<std::uint8_t>(0x10 + i));
  garage.channels = {{"ct1"}, {"ct2"}};
  NodeConfig shed;
  shed.id = "shed";
  shed.auth = AuthMode::kPlain;
  for (int i = 0; i < 32; ++i) shed.key.push_back(static_cast<std::uint8_t>(0xa0 + i));
  shed.channels = {{"ct1"}};
  return {garage, shed};
}

// Two intervals of a 10 s reporting node, ending 20 s and 10 s before kIngestNow.
inline NodePack IngestPack(const std::string& node = "garage") {
  NodePack pack;
  pack.node = node;
  pack.boot = 4;
  pack.seq = 1881;
  pack.interval_ms = 10000;
  ChannelSample a;
  a.channel = "ct1";
  a.end_ms = kIngestNow - 20000;
  a.duration_ms = 10000;
  a.amps = 6.5;
  a.volts = 121.4;
  a.real_watts = 702.25;
  a.real_register_j = 12345678.5;
  a.power_factor = 0.89;
  ChannelSample b = a;
  b.end_ms = kIngestNow - 10000;
  b.amps = 6.25;
  b.real_register_j = 12352701;
  b.apparent_va = 758.75;
  b.apparent_register_j = 13000000;
  b.frequency_hz = 59.98;
  b.duration_ms = 7500;  // a partial interval: carries its own ut
  return {pack.node, pack.boot, pack.seq, pack.interval_ms, {a, b}};
}

}  // namespace ampledger::testing
