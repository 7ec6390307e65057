// tests/fuzz/datagram_fuzz.cpp
// libFuzzer target for everything a datagram's bytes reach in daemon/ingest: the whole
// DecodeDatagram pipeline, and, so that the fuzzer is not stopped by node ids and MACs it
// cannot guess, each stage on its own (CBOR, SenML JSON/CBOR, pack rules, COSE_Mac0 parse and
// verify, acknowledgements, the replay window blob). Built by tests/fuzz/run.sh only.
#include <cstddef>
#include <cstdint>
#include <string_view>
#include <vector>

#include "daemon/ingest/ack.h"
#include "daemon/ingest/cbor_reader.h"
#include "daemon/ingest/cose_mac0.h"
#include "daemon/ingest/datagram.h"
#include "daemon/ingest/node_pack.h"
#include "daemon/ingest/replay_window.h"
#include "daemon/ingest/senml.h"

namespace {

using namespace ampledger;

constexpr UnixMs kNow = 1764633600000;

std::vector<NodeConfig> Nodes() {
  NodeConfig garage;
  garage.id = "garage";
  garage.key.assign(32, 0x42);
  garage.channels = {{"ct1"}, {"ct2"}};
  NodeConfig shed;
  shed.id = "shed";
  shed.auth = AuthMode::kPlain;
  shed.key.assign(32, 0x17);
  shed.channels = {{"ct1"}};
  // The RFC 8428 examples' base names, so their seeds reach the pack rules.
  NodeConfig urn;
  urn.id = "urn:dev:ow:10e2073a01080063:";
  urn.auth = AuthMode::kPlain;
  return {garage, shed, urn};
}

void Stages(std::string_view bytes) {
  const double now_seconds = kNow / 1000.0;
  IngestConfig limits;
  limits.max_datagram_bytes = 1 << 16;
  (void)DecodeCbor(bytes);
  for (DecodeResult<SenmlPack> senml :
       {DecodeSenmlJson(bytes, now_seconds), DecodeSenmlCbor(bytes, now_seconds)}) {
    if (senml.ok()) (void)InterpretNodePack(senml.value(), kNow, limits);
  }
  DecodeResult<CoseMac0> cose = ParseCoseMac0(bytes);
  if (cose.ok()) {
    (void)VerifyCoseMac0(cose.value(), std::string(32, '\x42'));
    DecodeResult<SenmlPack> payload = DecodeSenmlCbor(cose->payload, now_seconds);
    if (payload.ok()) (void)InterpretNodePack(payload.value(), kNow, limits);
  }
  (void)DecodeAck(bytes, "garage", "");
  Result<ReplayWindow> window = ReplayWindow::Deserialize(bytes);
  if (window.ok()) {
    window->Update(3, 77);
    (void)window->Check(3, 76);
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const std::vector<NodeConfig> nodes = Nodes();
  const std::string_view bytes(reinterpret_cast<const char*>(data), size);
  IngestConfig limits;  // the defaults: 1400 bytes, 60 s future, 7 days back
  DecodeResult<DecodedDatagram> decoded = DecodeDatagram(bytes, kNow, nodes, limits);
  if (decoded.ok()) {
    // What the daemon does next: check the window and answer.
    ReplayWindow window;
    (void)window.Check(decoded->pack.boot, decoded->pack.seq);
    window.Update(decoded->pack.boot, decoded->pack.seq);
    const Ack ack{decoded->pack.node, decoded->pack.boot, decoded->pack.seq};
    (void)EncodeAck(ack, decoded->encoding, std::string(32, '\x42'));
    (void)EncodePack(decoded->pack, decoded->encoding, std::string(32, '\x42'));
  }
  Stages(bytes);
  return 0;
}
