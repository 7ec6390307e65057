// tests/ingest/node_pack_test.cpp
// Reading resolved SenML as one of our nodes' packs (daemon/PROTOCOL.md).
#include <doctest/doctest.h>

#include "daemon/ingest/node_pack.h"

namespace ampledger {
namespace {

constexpr UnixMs kNow = 1764633600000;  // 2025-12-02T00:00:00Z
constexpr double kNowS = kNow / 1000.0;

DecodeResult<NodePack> Interpret(const std::string& json, const IngestConfig& limits = {}) {
  DecodeResult<SenmlPack> senml = DecodeSenmlJson(json, kNowS);
  REQUIRE_MESSAGE(senml.ok(), (senml.ok() ? "" : senml.refusal().detail));
  return InterpretNodePack(senml.value(), kNow, limits);
}

RefusalReason RefusalOf(const std::string& json) {
  DecodeResult<NodePack> pack = Interpret(json);
  REQUIRE(!pack.ok());
  return pack.reason();
}

TEST_SUITE("ingest") {

TEST_CASE("a node pack: boot, seq, interval, samples grouped by channel and time") {
  DecodeResult<NodePack> pack = Interpret(R"([
    {"bn":"garage/","bt":1764633590,"n":"boot","v":3},
    {"n":"seq","v":1207,"ut":10},
    {"n":"ct1/i","u":"A","v":4.25},
    {"n":"ct1/p","u":"W","v":512.5,"s":3600000},
    {"n":"ct1/s","u":"VA","v":980,"s":7000000},
    {"n":"ct1/pf","u":"/","v":0.52},
    {"n":"ct1/v","u":"V","v":121.1},
    {"n":"ct1/f","u":"Hz","v":60.01},
    {"n":"ct2/i","u":"A","v":0},
    {"n":"ct1/i","u":"A","v":4.5,"t":-10}
  ])");
  REQUIRE_MESSAGE(pack.ok(), (pack.ok() ? "" : pack.refusal().detail));
  CHECK(pack->node == "garage");
  CHECK(pack->boot == 3);
  CHECK(pack->seq == 1207);
  CHECK(pack->interval_ms == 10000);
  REQUIRE(pack->samples.size() == 3);
  // Ordered by time, then channel.
  CHECK(pack->samples[0].channel == "ct1");
  CHECK(pack->samples[0].end_ms == 1764633580000);
  CHECK(*pack->samples[0].amps == 4.5);
  const ChannelSample& s = pack->samples[1];
  CHECK(s.channel == "ct1");
  CHECK(s.end_ms == 1764633590000);
  CHECK(s.duration_ms == 10000);
  CHECK(*s.amps == 4.25);
  CHECK(*s.real_watts == 512.5);
  CHECK(*s.real_register_j == 3600000);
  CHECK(*s.apparent_va == 980);
  CHECK(*s.apparent_register_j == 7000000);
  CHECK(*s.power_factor == 0.52);
  CHECK(*s.volts == 121.1);
  CHECK(*s.frequency_hz == 60.01);
  CHECK(pack->samples[2].channel == "ct2");
  CHECK(*pack->samples[2].amps == 0);
  CHECK(!pack->samples[2].volts);
}

TEST_CASE("a record's own ut is its sample's duration; a register alone is enough") {
  DecodeResult<NodePack> pack = Interpret(R"([
    {"bn":"n1/","bt":1764633590,"n":"boot","v":0},{"n":"seq","v":0,"ut":60},
    {"n":"ct1/p","u":"W","s":1234.5,"ut":17}])");
  REQUIRE(pack.ok());
  CHECK(pack->samples[0].duration_ms == 17000);
  CHECK(!pack->samples[0].real_watts);
  CHECK(*pack->samples[0].real_register_j == 1234.5);
}

TEST_CASE("secondary units (RFC 8798) convert to SI under bver 26") {
  // RFC 8798 Table 2: kW x 1000 = W; mA x 1/1000 = A; /100 x 1/100 = /.
  DecodeResult<NodePack> pack = Interpret(R"([
    {"bver":26,"bn":"n1/","bt":1764633590,"n":"boot","v":1},{"n":"seq","v":2,"ut":10},
    {"n":"ct1/p","u":"kW","v":1.5,"s":2.5},{"n":"ct1/i","u":"mA","v":250},
    {"n":"ct1/pf","u":"/100","v":95},{"n":"ct1/v","u":"mV","v":120000},
    {"n":"ct1/s","u":"kVA","v":2}])");
  REQUIRE_MESSAGE(pack.ok(), (pack.ok() ? "" : pack.refusal().detail));
  const ChannelSample& s = pack->samples[0];
  CHECK(*s.real_watts == 1500);
  CHECK(*s.real_register_j == 2500);  // kW s
  CHECK(*s.amps == 0.25);
  CHECK(*s.power_factor == doctest::Approx(0.95));
  CHECK(*s.volts == 120);
  CHECK(*s.apparent_va == 2000);
  // Without bver 26 a secondary unit is refused (RFC 8798 section 3).
  CHECK(RefusalOf(R"([{"bn":"n1/","bt":1764633590,"n":"boot","v":1},{"n":"seq","v":2,"ut":10},
                      {"n":"ct1/p","u":"kW","v":1.5}])") == RefusalReason::kUnitMismatch);
}

TEST_CASE("each refusal of a node pack") {
  const std::string head = R"({"bn":"n1/","bt":1764633590,"n":"boot","v":1},{"n":"seq","v":2,"ut":10})";
  auto with = [&](const std::string& records) { return "[" + head + "," + records + "]"; };
  CHECK(RefusalOf(with(R"({"n":"ct1/i","u":"W","v":1})")) == RefusalReason::kUnitMismatch);
  CHECK(RefusalOf(with(R"({"n":"ct1/i","v":1})")) == RefusalReason::kUnitMismatch);
  CHECK(RefusalOf(with(R"({"n":"ct1/temp","u":"Cel","v":1})")) == RefusalReason::kUnknownRecord);
  CHECK(RefusalOf(with(R"({"n":"ct1","u":"A","v":1})")) == RefusalReason::kUnknownRecord);
  CHECK(RefusalOf(with(R"({"n":"ct1/a/i","u":"A","v":1})")) == RefusalReason::kUnknownRecord);
  CHECK(RefusalOf(with(R"({"bn":"n2/","n":"ct1/i","u":"A","v":1})")) == RefusalReason::kMixedNodes);
  CHECK(RefusalOf(with(R"({"n":"ct1/i","u":"A","v":-1})")) == RefusalReason::kOutOfRange);
  CHECK(RefusalOf(with(R"({"n":"ct1/pf","u":"/","v":1.2})")) == RefusalReason::kOutOfRange);
  CHECK(RefusalOf(with(R"({"n":"ct1/p","u":"W","v":1,"s":-5})")) == RefusalReason::kOutOfRange);
  CHECK(RefusalOf(with(R"({"n":"ct1/i","u":"A","v":1,"ut":0})")) == RefusalReason::kOutOfRange);
  CHECK(RefusalOf(with(R"({"n":"ct1/i","u":"A","v":1,"s":5})")) == RefusalReason::kMalformed);
  CHECK(RefusalOf(with(R"({"n":"ct1/i","u":"A","vs":"1"})")) == RefusalReason::kMalformed);
  CHECK(RefusalOf(with(R"({"n":"ct1/i","u":"A","v":1},{"n":"ct1/i","u":"A","v":2})")) ==
        RefusalReason::kMalformed);
  CHECK(RefusalOf(with(R"({"n":"ct1/i","u":"A","v":1,"ut":5},{"n":"ct1/p","u":"W","v":2,"ut":6})")) ==
        RefusalReason::kMalformed);
  CHECK(RefusalOf(with(R"({"n":"boot","v":1})")) == RefusalReason::kMalformed);  // twice
  // Missing boot, missing seq, seq without ut, counters out of range or fractional.
  CHECK(RefusalOf(R"([{"bn":"n1/","n":"seq","v":1,"ut":10}])") == RefusalReason::kMalformed);
  CHECK(RefusalOf(R"([{"bn":"n1/","n":"boot","v":1}])") == RefusalReason::kMalformed);
  CHECK(RefusalOf(R"([{"bn":"n1/","n":"boot","v":1},{"n":"seq","v":1}])") ==
        RefusalReason::kMalformed);
  CHECK(RefusalOf(R"([{"bn":"n1/","n":"boot","v":4294967296},{"n":"seq","v":1,"ut":10}])") ==
        RefusalReason::kOutOfRange);
  CHECK(RefusalOf(R"([{"bn":"n1/","n":"boot","v":1.5},{"n":"seq","v":1,"ut":10}])") ==
        RefusalReason::kMalformed);
  CHECK(RefusalOf(R"([{"bn":"n1/","n":"boot","u":"A","v":1},{"n":"seq","v":1,"ut":10}])") ==
        RefusalReason::kUnitMismatch);
  CHECK(RefusalOf(R"([{"bn":"n1/","n":"boot","v":1},{"n":"seq","v":1,"ut":90000}])") ==
        RefusalReason::kOutOfRange);
}

TEST_CASE("boot and seq take no unit or count; 2^32 - 1 is the largest counter") {
  DecodeResult<NodePack> pack = Interpret(
      R"([{"bn":"n1/","n":"boot","u":"count","v":4294967295},{"n":"seq","v":0,"ut":0.5}])");
  REQUIRE(pack.ok());
  CHECK(pack->boot == 4294967295u);
  CHECK(pack->interval_ms == 500);
  CHECK(pack->samples.empty());
}

TEST_CASE("clock: readings beyond now + max_future or before now - horizon are refused") {
  IngestConfig limits;
  limits.max_future_seconds = 60;
  limits.resend_horizon_seconds = 3600;
  auto at = [&](double t) {
    return Interpret(R"([{"bn":"n1/","n":"boot","v":1},{"n":"seq","v":1,"ut":10},
                         {"n":"c/i","u":"A","v":1,"t":)" + std::to_string(t) + "}]", limits);
  };
  CHECK(at(kNowS + 60).ok());
  CHECK(at(kNowS - 3600).ok());
  CHECK(at(kNowS + 60.5).reason() == RefusalReason::kClock);
  CHECK(at(kNowS - 3600.5).reason() == RefusalReason::kClock);
  // Relative times: -3599 s before now is within, +61 s is not.
  CHECK(at(-3599).ok());
  CHECK(at(61).reason() == RefusalReason::kClock);
  // Absolute times from long ago (just above 2^28) are refused too.
  CHECK(at(268435456).reason() == RefusalReason::kClock);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
