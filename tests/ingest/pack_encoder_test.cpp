// tests/ingest/pack_encoder_test.cpp
#include <doctest/doctest.h>

#include "daemon/ingest/pack_encoder.h"
#include "tests/ingest/ingest_fixture.h"

namespace ampledger {
namespace {

using testing::IngestPack;

TEST_SUITE("ingest") {

TEST_CASE("a JSON pack reads as the protocol document describes") {
  NodePack pack = IngestPack("shed");
  pack.samples.resize(1);
  pack.samples[0].apparent_va.reset();
  pack.samples[0].frequency_hz.reset();
  PackEncoding json{PackFormat::kJson, MacAlgorithm::kHmac256_64, true, std::nullopt};
  CHECK(EncodePack(pack, json, "") ==
        R"([{"bn":"shed/","bt":1764633580,"n":"boot","v":4},)"
        R"({"n":"seq","v":1881,"ut":10},)"
        R"({"n":"ct1/i","u":"A","v":6.5},)"
        R"({"n":"ct1/v","u":"V","v":121.4},)"
        R"({"n":"ct1/p","u":"W","v":702.25,"s":12345678.5},)"
        R"({"n":"ct1/pf","u":"/","v":0.89}])");
  PackEncoding relative = json;
  relative.relative_to = testing::kIngestNow;
  CHECK(EncodePack(pack, relative, "").find(R"("n":"ct1/i","u":"A","t":-20,"v":6.5)") !=
        std::string::npos);
}

TEST_CASE("a register without a mean value is still written") {
  NodePack pack = IngestPack("shed");
  pack.samples.resize(1);
  pack.samples[0] = ChannelSample{};
  pack.samples[0].channel = "ct1";
  pack.samples[0].end_ms = testing::kIngestNow;
  pack.samples[0].duration_ms = pack.interval_ms;
  pack.samples[0].real_register_j = 99;
  PackEncoding json{PackFormat::kJson, MacAlgorithm::kHmac256_64, true, std::nullopt};
  CHECK(EncodePack(pack, json, "").find(R"({"n":"ct1/p","u":"W","s":99})") != std::string::npos);
}

TEST_CASE("names of formats and auth") {
  CHECK(std::string(PackFormatName(PackFormat::kCoseMac0)) == "cose_mac0");
  PackEncoding e;
  CHECK(std::string(AuthName(e)) == "HMAC 256/64");
  e.format = PackFormat::kCbor;
  CHECK(std::string(AuthName(e)) == "none");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
