// tests/ingest/datagram_test.cpp
// The whole receive-side decoding of a datagram: each form, each refusal reason, and the
// replay window as the daemon drives it.
#include <doctest/doctest.h>

#include "daemon/ingest/datagram.h"
#include "daemon/ingest/replay_window.h"
#include "tests/ingest/hex.h"
#include "tests/ingest/ingest_fixture.h"

namespace ampledger {
namespace {

using testing::IngestNodes;
using testing::IngestPack;
using testing::KeyString;
using testing::kIngestNow;

const std::vector<NodeConfig> kNodes = IngestNodes();

DecodeResult<DecodedDatagram> Decode(const std::string& bytes, UnixMs now = kIngestNow) {
  return DecodeDatagram(bytes, now, kNodes, IngestConfig{});
}

RefusalReason RefusalOf(const std::string& bytes) {
  DecodeResult<DecodedDatagram> d = Decode(bytes);
  REQUIRE(!d.ok());
  return d.reason();
}

void CheckSamePack(const NodePack& a, const NodePack& b) {
  CHECK(a.node == b.node);
  CHECK(a.boot == b.boot);
  CHECK(a.seq == b.seq);
  CHECK(a.interval_ms == b.interval_ms);
  REQUIRE(a.samples.size() == b.samples.size());
  for (std::size_t i = 0; i < a.samples.size(); ++i) {
    const ChannelSample& x = a.samples[i];
    const ChannelSample& y = b.samples[i];
    CHECK(x.channel == y.channel);
    CHECK(x.end_ms == y.end_ms);
    CHECK(x.duration_ms == y.duration_ms);
    CHECK(x.amps == y.amps);
    CHECK(x.volts == y.volts);
    CHECK(x.real_watts == y.real_watts);
    CHECK(x.apparent_va == y.apparent_va);
    CHECK(x.power_factor == y.power_factor);
    CHECK(x.frequency_hz == y.frequency_hz);
    CHECK(x.real_register_j == y.real_register_j);
    CHECK(x.apparent_register_j == y.apparent_register_j);
  }
}

PackEncoding Cose(MacAlgorithm alg, bool tagged = true) {
  PackEncoding e;
  e.format = PackFormat::kCoseMac0;
  e.alg = alg;
  e.tagged = tagged;
  return e;
}

PackEncoding Plain(PackFormat format) {
  PackEncoding e;
  e.format = format;
  return e;
}

TEST_SUITE("ingest") {

TEST_CASE("COSE_Mac0 datagrams round trip, both algorithms, tagged and untagged") {
  const NodePack pack = IngestPack();
  for (MacAlgorithm alg : {MacAlgorithm::kHmac256_64, MacAlgorithm::kHmac256_256}) {
    for (bool tagged : {true, false}) {
      const std::string bytes = EncodePack(pack, Cose(alg, tagged), KeyString(kNodes[0]));
      CHECK(ClassifyDatagram(bytes) == PackFormat::kCoseMac0);
      DecodeResult<DecodedDatagram> d = Decode(bytes);
      REQUIRE_MESSAGE(d.ok(), (d.ok() ? "" : d.refusal().detail));
      CHECK(d->encoding.format == PackFormat::kCoseMac0);
      CHECK(d->encoding.alg == alg);
      CHECK(d->encoding.tagged == tagged);
      CHECK(d->kid == "garage");
      CHECK(std::string(AuthName(d->encoding)) == MacAlgorithmName(alg));
      CheckSamePack(d->pack, pack);
    }
  }
}

TEST_CASE("plain JSON and CBOR datagrams from a plain node; COSE from it too") {
  const NodePack pack = IngestPack("shed");
  for (PackFormat format : {PackFormat::kJson, PackFormat::kCbor}) {
    const std::string bytes = EncodePack(pack, Plain(format), "");
    CHECK(ClassifyDatagram(bytes) == format);
    DecodeResult<DecodedDatagram> d = Decode(bytes);
    REQUIRE_MESSAGE(d.ok(), (d.ok() ? "" : d.refusal().detail));
    CHECK(d->encoding.format == format);
    CHECK(std::string(AuthName(d->encoding)) == "none");
    CHECK(d->kid.empty());
    CheckSamePack(d->pack, pack);
  }
  DecodeResult<DecodedDatagram> cose =
      Decode(EncodePack(pack, Cose(MacAlgorithm::kHmac256_256), KeyString(kNodes[1])));
  REQUIRE(cose.ok());
  CHECK(cose->encoding.format == PackFormat::kCoseMac0);
}

TEST_CASE("relative times (t < 2^28) resolve against the reception time") {
  // RFC 8428 section 4.5.3: a node without a clock sends offsets from its send moment.
  const NodePack pack = IngestPack();
  PackEncoding e = Cose(MacAlgorithm::kHmac256_64);
  e.relative_to = kIngestNow;
  const std::string bytes = EncodePack(pack, e, KeyString(kNodes[0]));
  DecodeResult<DecodedDatagram> d = Decode(bytes);
  REQUIRE(d.ok());
  CheckSamePack(d->pack, pack);
  // Received 1.5 s after it was sent: every time is 1.5 s later (transit is not known).
  DecodeResult<DecodedDatagram> late = Decode(bytes, kIngestNow + 1500);
  REQUIRE(late.ok());
  CHECK(late->pack.samples[0].end_ms == pack.samples[0].end_ms + 1500);
}

TEST_CASE("each refusal reason of DecodeDatagram") {
  const std::string garage_key = KeyString(kNodes[0]);
  const NodePack pack = IngestPack();
  SUBCASE("oversize") {
    CHECK(RefusalOf(std::string(1401, '[')) == RefusalReason::kOversize);
  }
  SUBCASE("malformed") {
    DecodeResult<DecodedDatagram> d = Decode(testing::FromHex("81a200616102f97c00"));
    REQUIRE(!d.ok());
    CHECK(d.refusal().detail == "SenML: record 1: v is not a finite number");
    CHECK(RefusalOf("") == RefusalReason::kMalformed);
    CHECK(RefusalOf("[]") == RefusalReason::kMalformed);
    CHECK(RefusalOf(R"([{"bn":"shed/"}])") == RefusalReason::kMalformed);
    CHECK(RefusalOf("hello") == RefusalReason::kMalformed);
    CHECK(RefusalOf("[{\"bn\":") == RefusalReason::kMalformed);
    CHECK(RefusalOf(testing::FromHex("d18443a10104a0")) == RefusalReason::kMalformed);
  }
  SUBCASE("unsupported") {
    CHECK(RefusalOf(R"([{"bver":11,"bn":"shed/","n":"boot","v":1}])") ==
          RefusalReason::kUnsupported);
    std::string cose = EncodePack(pack, Cose(MacAlgorithm::kHmac256_64), garage_key);
    cose[0] = static_cast<char>(0xd2);  // tag 18 (COSE_Sign1) instead of 17
    CHECK(RefusalOf(cose) == RefusalReason::kUnsupported);
  }
  SUBCASE("unknown_node") {
    CHECK(RefusalOf(EncodePack(IngestPack("attic"), Plain(PackFormat::kJson), "")) ==
          RefusalReason::kUnknownNode);
    CHECK(RefusalOf(EncodePack(IngestPack("attic"), Cose(MacAlgorithm::kHmac256_64), garage_key)) ==
          RefusalReason::kUnknownNode);
  }
  SUBCASE("auth_required") {
    CHECK(RefusalOf(EncodePack(pack, Plain(PackFormat::kJson), "")) == RefusalReason::kAuthRequired);
    CHECK(RefusalOf(EncodePack(pack, Plain(PackFormat::kCbor), "")) == RefusalReason::kAuthRequired);
  }
  SUBCASE("bad_tag") {
    std::string cose = EncodePack(pack, Cose(MacAlgorithm::kHmac256_64), garage_key);
    cose.back() ^= 0x01;
    CHECK(RefusalOf(cose) == RefusalReason::kBadTag);
    CHECK(RefusalOf(EncodePack(pack, Cose(MacAlgorithm::kHmac256_256), KeyString(kNodes[1]))) ==
          RefusalReason::kBadTag);
    // A plain node without a key cannot be impersonated with COSE_Mac0 under an empty key.
    std::vector<NodeConfig> keyless = kNodes;
    keyless[1].key.clear();
    const std::string forged = EncodePack(IngestPack("shed"), Cose(MacAlgorithm::kHmac256_64), "");
    DecodeResult<DecodedDatagram> d = DecodeDatagram(forged, kIngestNow, keyless, IngestConfig{});
    REQUIRE(!d.ok());
    CHECK(d.reason() == RefusalReason::kBadTag);
  }
  SUBCASE("kid_mismatch") {
    // A pack naming "shed" inside a COSE_Mac0 whose kid (and key) are garage's.
    const std::string payload = EncodePack(IngestPack("shed"), Plain(PackFormat::kCbor), "");
    CHECK(RefusalOf(CreateCoseMac0(payload, garage_key, MacAlgorithm::kHmac256_64, "garage")) ==
          RefusalReason::kKidMismatch);
  }
  SUBCASE("the pack rules") {
    auto json = [](const std::string& records) {
      return R"([{"bn":"shed/","n":"boot","v":1},{"n":"seq","v":2,"ut":10},)" + records + "]";
    };
    CHECK(RefusalOf(json(R"({"bn":"garage/","n":"ct1/i","u":"A","v":1})")) ==
          RefusalReason::kMixedNodes);
    CHECK(RefusalOf(json(R"({"n":"ct1/rpm","u":"Hz","v":1})")) == RefusalReason::kUnknownRecord);
    CHECK(RefusalOf(json(R"({"n":"ct9/i","u":"A","v":1})")) == RefusalReason::kUnknownChannel);
    CHECK(RefusalOf(json(R"({"n":"ct1/i","u":"W","v":1})")) == RefusalReason::kUnitMismatch);
    CHECK(RefusalOf(json(R"({"n":"ct1/i","u":"A","v":-2})")) == RefusalReason::kOutOfRange);
    CHECK(RefusalOf(json(R"({"n":"ct1/i","u":"A","v":1,"t":120})")) == RefusalReason::kClock);
    CHECK(RefusalOf(json(R"({"n":"ct1/i","u":"A","v":1,"t":-700000})")) == RefusalReason::kClock);
  }
}

TEST_CASE("an acknowledged datagram's duplicate is recognised, a replay of an old one refused") {
  // The daemon's sequence: decode, Check, store, (durable) Update, acknowledge.
  const std::string key = KeyString(kNodes[0]);
  NodePack pack = IngestPack();
  ReplayWindow window;
  const std::string first = EncodePack(pack, Cose(MacAlgorithm::kHmac256_64), key);
  DecodeResult<DecodedDatagram> d = Decode(first);
  REQUIRE(d.ok());
  CHECK(window.Check(d->pack.boot, d->pack.seq) == ReplayVerdict::kFresh);
  window.Update(d->pack.boot, d->pack.seq);
  // The same datagram again (its ack was lost): valid, and a duplicate: re-acknowledge.
  DecodeResult<DecodedDatagram> again = Decode(first);
  REQUIRE(again.ok());
  CHECK(window.Check(again->pack.boot, again->pack.seq) == ReplayVerdict::kDuplicate);
  // Far newer datagrams push it out of the window: then it is a replay.
  pack.seq += ReplayWindow::kWindowSize;
  DecodeResult<DecodedDatagram> newer = Decode(EncodePack(pack, Cose(MacAlgorithm::kHmac256_64), key));
  REQUIRE(newer.ok());
  window.Update(newer->pack.boot, newer->pack.seq);
  CHECK(window.Check(again->pack.boot, again->pack.seq) == ReplayVerdict::kTooOld);
}

TEST_CASE("a datagram with a half-precision value decodes") {
  // 0.5 A on ct1 written as f9 3800; boot 1, seq 2, ut 10 (RFC 8949 Appendix D half floats).
  const std::string hex =
      "83"                                  // [
      "a3" "21" "65" "736865642f"           //  {-2: "shed/",
      "00" "64626f6f74" "02" "01"           //   0: "boot", 2: 1},
      "a3" "00" "63736571" "02" "02" "07" "0a"  //  {0: "seq", 2: 2, 7: 10},
      "a3" "00" "656374312f69" "01" "6141" "02" "f93800";  // {0:"ct1/i",1:"A",2:0.5}]
  DecodeResult<DecodedDatagram> d = Decode(testing::FromHex(hex));
  REQUIRE_MESSAGE(d.ok(), (d.ok() ? "" : d.refusal().detail));
  REQUIRE(d->pack.samples.size() == 1);
  CHECK(*d->pack.samples[0].amps == 0.5);
  CHECK(d->pack.samples[0].end_ms == kIngestNow);  // no time: now
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
