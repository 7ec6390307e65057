// tests/bench/decode_bench.cpp
// Microseconds per datagram for the ingest thread's decoding alone (DecodeDatagram: COSE_Mac0
// verify, SenML CBOR or JSON, the node-pack rules), without sockets or storage: the figure
// that bounds how many datagrams one ingest thread can take. Packs as ingest_bench sends them:
// 8 channels of current, real power and energy register.
// Run on demand: decode_bench [datagrams per format, default 200000]
#include <chrono>
#include <cstdio>
#include <string>

#include "config/config.h"
#include "config/wall_clock.h"
#include "daemon/ingest/datagram.h"
#include "daemon/ingest/pack_encoder.h"

namespace ampledger {
namespace {

constexpr int kChannels = 8;

NodePack MakePack(UnixMs end_ms) {
  NodePack pack{"bench0", 1, 7, 1000, {}};
  for (int c = 1; c <= kChannels; ++c) {
    ChannelSample& s = pack.samples.emplace_back();
    s.channel = "ct" + std::to_string(c);
    s.end_ms = end_ms;
    s.duration_ms = 1000;
    s.real_watts = 100 * c + 7;
    s.amps = *s.real_watts / 230;
    s.real_register_j = 8 * (100.0 * c + 25);
  }
  return pack;
}

int Main(int argc, char** argv) {
  const int count = argc > 1 ? std::stoi(argv[1]) : 200000;
  NodeConfig node;
  node.id = "bench0";
  node.key.assign(32, 0x5e);
  for (int c = 1; c <= kChannels; ++c) node.channels.push_back({"ct" + std::to_string(c)});
  const std::vector<NodeConfig> nodes = {node};
  const IngestConfig limits;
  const std::string key(node.key.begin(), node.key.end());
  const UnixMs now = WallClockMs();

  struct Case {
    const char* name;
    PackEncoding encoding;
    AuthMode auth;
  } cases[] = {
      {"COSE_Mac0 HMAC 256/64, CBOR", {PackFormat::kCoseMac0, MacAlgorithm::kHmac256_64, true, {}},
       AuthMode::kCoseMac0},
      {"plain SenML CBOR", {PackFormat::kCbor, MacAlgorithm::kHmac256_64, true, {}},
       AuthMode::kPlain},
      {"plain SenML JSON", {PackFormat::kJson, MacAlgorithm::kHmac256_64, true, {}},
       AuthMode::kPlain},
  };
  std::printf("decode_bench: %d datagrams per format, %d channels each\n", count, kChannels);
  for (const Case& c : cases) {
    std::vector<NodeConfig> configured = nodes;
    configured[0].auth = c.auth;
    const std::string bytes = EncodePack(MakePack(now - 1000), c.encoding, key);
    int accepted = 0;
    const auto started = std::chrono::steady_clock::now();
    for (int i = 0; i < count; ++i) {
      accepted += DecodeDatagram(bytes, now, configured, limits).ok() ? 1 : 0;
    }
    const double seconds =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
    std::printf("  %-30s %4zu bytes  %6.2f us/datagram  %9.0f datagrams/s  (%d of %d accepted)\n",
                c.name, bytes.size(), seconds * 1e6 / count, count / seconds, accepted, count);
    if (accepted != count) return 1;
  }
  return 0;
}

}  // namespace
}  // namespace ampledger

int main(int argc, char** argv) { return ampledger::Main(argc, argv); }
