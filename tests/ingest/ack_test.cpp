// tests/ingest/ack_test.cpp
#include <doctest/doctest.h>

#include "daemon/ingest/ack.h"
#include "daemon/ingest/datagram.h"
#include "tests/ingest/hex.h"
#include "tests/ingest/ingest_fixture.h"

namespace ampledger {
namespace {

using testing::IngestNodes;
using testing::KeyString;

TEST_SUITE("ingest") {

TEST_CASE("acknowledgements round trip in each encoding") {
  const std::vector<NodeConfig> nodes = IngestNodes();
  const std::string key = KeyString(nodes[0]);
  const Ack ack{"garage", 4, 1881};
  for (MacAlgorithm alg : {MacAlgorithm::kHmac256_64, MacAlgorithm::kHmac256_256}) {
    for (bool tagged : {true, false}) {
      PackEncoding e{PackFormat::kCoseMac0, alg, tagged, std::nullopt};
      const std::string bytes = EncodeAck(ack, e, key);
      DecodeResult<Ack> back = DecodeAck(bytes, "garage", key);
      REQUIRE_MESSAGE(back.ok(), (back.ok() ? "" : back.refusal().detail));
      CHECK(*back == ack);
      DecodeResult<CoseMac0> cose = ParseCoseMac0(bytes);
      REQUIRE(cose.ok());
      CHECK(cose->alg == alg);
      CHECK(cose->tagged == tagged);
      CHECK(cose->kid == "garage");
    }
  }
  for (PackFormat format : {PackFormat::kJson, PackFormat::kCbor}) {
    PackEncoding e{format, MacAlgorithm::kHmac256_64, true, std::nullopt};
    DecodeResult<Ack> back = DecodeAck(EncodeAck({"shed", 0, 4294967295u}, e, ""), "shed", "");
    REQUIRE(back.ok());
    CHECK(back->seq == 4294967295u);
  }
  PackEncoding json{PackFormat::kJson, MacAlgorithm::kHmac256_64, true, std::nullopt};
  CHECK(EncodeAck({"shed", 2, 17}, json, "") ==
        R"([{"bn":"shed/","n":"ack_boot","v":2},{"n":"ack_seq","v":17}])");
}

TEST_CASE("the node refuses forged, plain, foreign and malformed acknowledgements") {
  const std::vector<NodeConfig> nodes = IngestNodes();
  const std::string key = KeyString(nodes[0]);
  PackEncoding cose{PackFormat::kCoseMac0, MacAlgorithm::kHmac256_64, true, std::nullopt};
  PackEncoding cbor{PackFormat::kCbor, MacAlgorithm::kHmac256_64, true, std::nullopt};
  std::string forged = EncodeAck({"garage", 4, 1881}, cose, key);
  forged.back() ^= 0x40;
  CHECK(DecodeAck(forged, "garage", key).reason() == RefusalReason::kBadTag);
  CHECK(DecodeAck(EncodeAck({"garage", 4, 1881}, cbor, ""), "garage", key).reason() ==
        RefusalReason::kAuthRequired);
  CHECK(DecodeAck(EncodeAck({"shed", 4, 1881}, cose, key), "garage", key).reason() ==
        RefusalReason::kKidMismatch);
  CHECK(DecodeAck(EncodeAck({"shed", 4, 1881}, cbor, ""), "garage", "").reason() ==
        RefusalReason::kMixedNodes);
  CHECK(DecodeAck(R"([{"bn":"garage/","n":"ack_boot","v":1}])", "garage", "").reason() ==
        RefusalReason::kMalformed);
  CHECK(DecodeAck(R"([{"bn":"garage/","n":"ack_boot","v":1},{"n":"ack_seq","v":-1}])", "garage",
                  "").reason() == RefusalReason::kMalformed);
  CHECK(DecodeAck(R"([{"bn":"garage/","n":"boot","v":1},{"n":"seq","v":1,"ut":10}])", "garage",
                  "").reason() == RefusalReason::kUnknownRecord);
}

TEST_CASE("an acknowledgement reflected to the daemon is refused") {
  const std::vector<NodeConfig> nodes = IngestNodes();
  PackEncoding cose{PackFormat::kCoseMac0, MacAlgorithm::kHmac256_64, true, std::nullopt};
  const std::string ack = EncodeAck({"garage", 4, 1881}, cose, KeyString(nodes[0]));
  DecodeResult<DecodedDatagram> d = DecodeDatagram(ack, testing::kIngestNow, nodes, IngestConfig{});
  REQUIRE(!d.ok());
  CHECK(d.reason() == RefusalReason::kUnknownRecord);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
