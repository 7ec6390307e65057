// tests/fuzz/datagram_fuzz.cpp
// libFuzzer target for everything a datagram's bytes reach in daemon/ingest: the whole
// DecodeDatagram pipeline, and, so that the fuzzer is not stopped by node ids and MACs it
// cannot guess, each stage on its own (CBOR, SenML JSON/CBOR, pack rules, COSE_Mac0 parse and
// verify, acknowledgements, the replay window blob). Also differential: the CBOR, SenML CBOR
// and COSE_Mac0 readers must give the verdict, reason and detail of the tree decoder they
// replaced (tests/ingest/cbor_tree_oracle.h); a difference aborts, so libFuzzer keeps the input.
// Built by tests/fuzz/run.sh only.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string_view>
#include <vector>

#include "daemon/ingest/ack.h"
#include "daemon/ingest/cbor_reader.h"
#include "daemon/ingest/cose_mac0.h"
#include "daemon/ingest/datagram.h"
#include "daemon/ingest/node_pack.h"
#include "daemon/ingest/replay_window.h"
#include "daemon/ingest/senml.h"
#include "tests/ingest/cbor_tree_oracle.h"

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

// The verdict of a decode, for comparing two readers: the refusal's reason and detail, or
// what was read.
std::string Verdict(const DecodeResult<SenmlPack>& r) {
  if (!r.ok()) return std::string(RefusalName(r.reason())) + ": " + r.refusal().detail;
  std::string out = "version " + std::to_string(r->version);
  for (const SenmlRecord& record : r->records) {
    out += "|" + record.name + "|" + record.unit + "|" + std::to_string(record.time);
    if (record.value) out += "|v" + std::to_string(*record.value);
    if (record.string_value) out += "|vs" + *record.string_value;
    if (record.bool_value) out += *record.bool_value ? "|vb1" : "|vb0";
    if (record.data_value) out += "|vd" + *record.data_value;
    if (record.sum) out += "|s" + std::to_string(*record.sum);
    if (record.update_time) out += "|ut" + std::to_string(*record.update_time);
  }
  return out;
}

std::string Verdict(const DecodeResult<CoseMac0>& r) {
  if (!r.ok()) return std::string(RefusalName(r.reason())) + ": " + r.refusal().detail;
  return std::string(r->tagged ? "17|" : "|") + MacAlgorithmName(r->alg) + "|" + r->kid + "|" +
         r->protected_bytes + "|" + r->payload + "|" + r->tag;
}

void Differ(const char* what, const std::string& now, const std::string& before) {
  if (now == before) return;
  std::fprintf(stderr, "%s differs from the tree decoder:\n  now:    %s\n  before: %s\n", what,
               now.c_str(), before.c_str());
  std::abort();
}

void Differential(std::string_view bytes, double now_seconds) {
  const Status checked = CheckCbor(bytes);
  const auto tree = testing::tree_oracle::DecodeCbor(bytes);
  Differ("CheckCbor", checked.ok() ? "ok" : checked.message(),
         tree.ok() ? "ok" : tree.status().message());
  Differ("DecodeSenmlCbor", Verdict(DecodeSenmlCbor(bytes, now_seconds)),
         Verdict(testing::tree_oracle::DecodeSenmlCbor(bytes, now_seconds)));
  Differ("ParseCoseMac0", Verdict(ParseCoseMac0(bytes)),
         Verdict(testing::tree_oracle::ParseCoseMac0(bytes)));
}

void Stages(std::string_view bytes) {
  const double now_seconds = kNow / 1000.0;
  IngestConfig limits;
  limits.max_datagram_bytes = 1 << 16;
  Differential(bytes, now_seconds);
  for (DecodeResult<SenmlPack> senml :
       {DecodeSenmlJson(bytes, now_seconds), DecodeSenmlCbor(bytes, now_seconds)}) {
    if (senml.ok()) (void)InterpretNodePack(senml.value(), kNow, limits);
  }
  DecodeResult<CoseMac0> cose = ParseCoseMac0(bytes);
  if (cose.ok()) {
    (void)VerifyCoseMac0(cose.value(), std::string(32, '\x42'));
    Differential(cose->payload, now_seconds);
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
