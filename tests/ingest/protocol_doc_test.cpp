// tests/ingest/protocol_doc_test.cpp
// The worked examples of daemon/PROTOCOL.md are real: the document's datagram verifies and
// decodes to the values the text states, our encoder writes exactly those bytes, and the
// document's acknowledgement is what the daemon sends. The example tag was also checked with
// Python's hmac module when the document was written.
#include <doctest/doctest.h>

#include <cctype>

#include "daemon/ingest/ack.h"
#include "daemon/ingest/datagram.h"
#include "tests/ingest/hex.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

// The text of the first ``` block after `marker`, with all white space removed.
std::string BlockAfter(const std::string& doc, const std::string& marker) {
  const std::size_t at = doc.find(marker);
  REQUIRE_MESSAGE(at != std::string::npos, marker);
  const std::size_t open = doc.find("```", at);
  const std::size_t start = doc.find('\n', open) + 1;
  const std::size_t close = doc.find("```", start);
  std::string block;
  for (std::size_t i = start; i < close; ++i) {
    if (!std::isspace(static_cast<unsigned char>(doc[i]))) block.push_back(doc[i]);
  }
  return block;
}

NodeConfig Laundry() {
  NodeConfig node;
  node.id = "laundry";
  for (int i = 0; i < 32; ++i) node.key.push_back(static_cast<std::uint8_t>(i));
  node.channels = {{"ct1"}};
  return node;
}

TEST_SUITE("ingest") {

TEST_CASE("PROTOCOL.md: the example datagram verifies and says what the text says") {
  const std::string doc = testing::ReadFile(testing::SourceDir() / "daemon" / "PROTOCOL.md");
  const std::string datagram = testing::FromHex(BlockAfter(doc, "<!-- example:datagram"));
  REQUIRE(datagram.size() == 101);
  const std::vector<NodeConfig> nodes = {Laundry()};
  const UnixMs received = 1767225600000 + 1500;
  DecodeResult<DecodedDatagram> d = DecodeDatagram(datagram, received, nodes, IngestConfig{});
  REQUIRE_MESSAGE(d.ok(), (d.ok() ? "" : d.refusal().detail));
  CHECK(d->kid == "laundry");
  CHECK(d->encoding.alg == MacAlgorithm::kHmac256_64);
  CHECK(d->encoding.tagged);
  CHECK(d->pack.boot == 7);
  CHECK(d->pack.seq == 1042);
  CHECK(d->pack.interval_ms == 10000);
  REQUIRE(d->pack.samples.size() == 1);
  const ChannelSample& s = d->pack.samples[0];
  CHECK(s.channel == "ct1");
  CHECK(s.end_ms == 1767225600000);  // 2026-01-01T00:00:00Z
  CHECK(*s.amps == 12.5);
  CHECK(*s.real_watts == 1458);
  CHECK(*s.real_register_j == 5250000);
  // Our encoder writes the same bytes from the same values.
  const std::string key(nodes[0].key.begin(), nodes[0].key.end());
  CHECK(testing::ToHex(EncodePack(d->pack, d->encoding, key)) == testing::ToHex(datagram));
  // The JSON form in the text decodes to the same pack for a plain node.
  std::vector<NodeConfig> plain = nodes;
  plain[0].auth = AuthMode::kPlain;
  DecodeResult<DecodedDatagram> json =
      DecodeDatagram(BlockAfter(doc, "The pack as JSON"), received, plain, IngestConfig{});
  REQUIRE(json.ok());
  CHECK(json->pack.samples[0].end_ms == s.end_ms);
  CHECK(*json->pack.samples[0].real_register_j == 5250000);
}

TEST_CASE("PROTOCOL.md: the example acknowledgement is what EncodeAck sends") {
  const std::string doc = testing::ReadFile(testing::SourceDir() / "daemon" / "PROTOCOL.md");
  const std::string ack = testing::FromHex(BlockAfter(doc, "<!-- example:ack"));
  REQUIRE(ack.size() == 65);
  const NodeConfig node = Laundry();
  const std::string key(node.key.begin(), node.key.end());
  DecodeResult<Ack> decoded = DecodeAck(ack, "laundry", key);
  REQUIRE(decoded.ok());
  CHECK(*decoded == Ack{"laundry", 7, 1042});
  PackEncoding encoding{PackFormat::kCoseMac0, MacAlgorithm::kHmac256_64, true, std::nullopt};
  CHECK(testing::ToHex(EncodeAck(*decoded, encoding, key)) == testing::ToHex(ack));
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
