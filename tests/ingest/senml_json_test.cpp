// tests/ingest/senml_json_test.cpp
// SenML JSON decoding and resolution against the examples of RFC 8428 section 5
// (tests/reference/data/senml, see its SOURCES.md).
#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <filesystem>

#include "daemon/ingest/senml.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

constexpr double kNow = 1700000000.0;  // an arbitrary reception time for "now"-relative packs

std::string SenmlFile(const std::string& name) {
  return testing::ReadFile(testing::ReferenceDir() / "senml" / name);
}

SenmlPack Decode(const std::string& text) {
  DecodeResult<SenmlPack> pack = DecodeSenmlJson(text, kNow);
  REQUIRE_MESSAGE(pack.ok(), (pack.ok() ? "" : pack.refusal().detail));
  return std::move(pack).value();
}

RefusalReason RefusalOf(const std::string& text) {
  DecodeResult<SenmlPack> pack = DecodeSenmlJson(text, kNow);
  REQUIRE(!pack.ok());
  return pack.reason();
}

TEST_SUITE("ingest") {

TEST_CASE("every RFC 8428 section 5 example decodes") {
  // Source: RFC 8428 section 5.1.1 - 5.1.7 (tests/reference/data/senml/SOURCES.md).
  int files = 0;
  for (const auto& entry : std::filesystem::directory_iterator(testing::ReferenceDir() / "senml")) {
    const std::string name = entry.path().filename().string();
    if (name.rfind("rfc8428-5.", 0) != 0) continue;
    CAPTURE(name);
    const SenmlPack pack = Decode(testing::ReadFile(entry.path()));
    CHECK(!pack.records.empty());
    ++files;
  }
  CHECK(files == 11);
}

TEST_CASE("RFC 8428 5.1.3 resolves to exactly 5.1.4") {
  // Source: RFC 8428 section 5.1.4, the only resolved form the RFC states
  // (tests/reference/data/senml/expected-resolved.json).
  const SenmlPack pack = Decode(SenmlFile("rfc8428-5.1.3-multiple-measurements.json"));
  const auto expected = nlohmann::json::parse(SenmlFile("expected-resolved.json"))
      ["rfc8428-5.1.3-multiple-measurements.json"];
  REQUIRE(pack.records.size() == expected.size());
  CHECK(pack.version == 10);
  for (std::size_t i = 0; i < expected.size(); ++i) {
    CAPTURE(i);
    const SenmlRecord& r = pack.records[i];
    CHECK(r.name == expected[i]["n"].get<std::string>());
    CHECK(r.unit == expected[i]["u"].get<std::string>());
    CHECK(r.time == expected[i]["t"].get<double>());
    REQUIRE(r.value);
    CHECK(*r.value == expected[i]["v"].get<double>());
    CHECK(!r.sum);
    CHECK(!r.string_value);
  }
  // And the RFC's own 5.1.4 file says the same.
  const SenmlPack resolved = Decode(SenmlFile("rfc8428-5.1.4-resolved-data.json"));
  REQUIRE(resolved.records.size() == pack.records.size());
  for (std::size_t i = 0; i < resolved.records.size(); ++i) {
    CHECK(resolved.records[i].name == pack.records[i].name);
    CHECK(resolved.records[i].time == pack.records[i].time);
    CHECK(*resolved.records[i].value == *pack.records[i].value);
  }
}

TEST_CASE("RFC 8428 5.1.2b: base time, relative t, base unit, bver 5") {
  // Source: RFC 8428 section 5.1.2: current at 2010-06-08 18:01:16.001 UTC and each second
  // for the previous 5 seconds.
  const SenmlPack pack = Decode(SenmlFile("rfc8428-5.1.2b-multiple-data-points-relative-times.json"));
  CHECK(pack.version == 5);
  REQUIRE(pack.records.size() == 7);
  // Chronological: t -5 .. 0 after the voltage at t 0 (stable for equal times).
  CHECK(pack.records[0].name == "urn:dev:ow:10e2073a0108006:current");
  CHECK(pack.records[0].unit == "A");  // bu
  CHECK(pack.records[0].time == doctest::Approx(1276020071.001).epsilon(1e-15));
  CHECK(*pack.records[0].value == 1.2);
  CHECK(pack.records[5].name == "urn:dev:ow:10e2073a0108006:voltage");
  CHECK(pack.records[5].unit == "V");
  CHECK(pack.records[5].time == 1.276020076001e+09);
  CHECK(pack.records[6].time == 1.276020076001e+09);
  CHECK(*pack.records[6].value == 1.7);
}

TEST_CASE("RFC 8428 5.1.1 and 5.1.2a: no time means now") {
  const SenmlPack single = Decode(SenmlFile("rfc8428-5.1.1-single-data-point.json"));
  REQUIRE(single.records.size() == 1);
  CHECK(single.records[0].time == kNow);
  CHECK(single.records[0].unit == "Cel");
  const SenmlPack two = Decode(SenmlFile("rfc8428-5.1.2a-multiple-data-points-now.json"));
  REQUIRE(two.records.size() == 2);
  CHECK(two.records[1].name == "urn:dev:ow:10e2073a01080063:current");  // bn + n
  CHECK(two.records[1].time == kNow);
}

TEST_CASE("RFC 8428 5.1.5: string, boolean and data values") {
  const SenmlPack pack = Decode(SenmlFile("rfc8428-5.1.5-multiple-data-types.json"));
  REQUIRE(pack.records.size() == 4);
  CHECK(*pack.records[1].string_value == "Machine Room");
  CHECK(*pack.records[2].bool_value == false);
  CHECK(*pack.records[3].data_value == "hi \n");  // base64url "aGkgCg"
  CHECK(!pack.records[3].value);
}

TEST_CASE("RFC 8428 5.1.6: last record has the 3rd record's bn and the 1st record's bt") {
  const SenmlPack pack = Decode(SenmlFile("rfc8428-5.1.6-collection-of-resources.json"));
  REQUIRE(pack.records.size() == 4);
  CHECK(pack.records[3].name == "2001:db8::1/humidity");
  CHECK(pack.records[3].time == 1.320078429e+09);
}

TEST_CASE("RFC 8428 5.1.7: a base-only record, and t 0.1 after bt") {
  const SenmlPack thermostat = Decode(SenmlFile("rfc8428-5.1.7a-actuator-thermostat.json"));
  REQUIRE(thermostat.records.size() == 3);
  CHECK(thermostat.records[1].name == "urn:dev:ow:10e2073a01080063:heat");
  CHECK(thermostat.records[1].unit == "/");
  const SenmlPack dim = Decode(SenmlFile("rfc8428-5.1.7c-actuator-lights-dim-then-off.json"));
  REQUIRE(dim.records.size() == 4);
  CHECK(dim.records[3].time == 1.320078429e+09 + 0.1);
  CHECK(dim.records[3].unit == "/");
}

TEST_CASE("relative times resolve against now") {
  const SenmlPack pack = Decode(R"([{"bn":"n1/","n":"a","v":1,"t":-30},{"n":"b","v":2,"t":5}])");
  CHECK(pack.records[0].time == kNow - 30);
  CHECK(pack.records[1].time == kNow + 5);
  // 2^28 - 1 is still relative; 2^28 is absolute (RFC 8428 section 4.5.3).
  const SenmlPack edge = Decode(R"([{"n":"a","v":1,"t":268435455},{"n":"b","v":1,"t":268435456}])");
  // Resolved records are chronological, so the absolute one comes first.
  CHECK(edge.records[0].name == "b");
  CHECK(edge.records[0].time == 268435456.0);
  CHECK(edge.records[1].time == kNow + 268435455.0);
}

TEST_CASE("bv and bs are added to v and s; base sum alone gives a sum") {
  const SenmlPack pack = Decode(R"([{"bn":"x/","bv":100,"bs":1000,"n":"a","v":5,"s":7},
                                    {"n":"b","s":1},{"n":"c","vs":"text"}])");
  CHECK(*pack.records[0].value == 105);
  CHECK(*pack.records[0].sum == 1007);
  CHECK(*pack.records[1].sum == 1001);
  CHECK(*pack.records[1].value == 100);  // section 4.5.4: the missing v counts as zero
  CHECK(*pack.records[2].string_value == "text");
  CHECK(*pack.records[2].sum == 1000);
}

TEST_CASE("unknown labels are ignored, must-understand labels refused") {
  // RFC 8428 section 4.4.
  const SenmlPack pack = Decode(R"([{"n":"a","v":1,"future":{"x":[1,2,{"y":null}]},"l":"z"}])");
  CHECK(pack.records.size() == 1);
  CHECK(RefusalOf(R"([{"n":"a","v":1,"new_":1}])") == RefusalReason::kUnsupported);
}

TEST_CASE("versions: newer than 10 refused, 26 (secondary units) understood") {
  CHECK(RefusalOf(R"([{"bver":11,"n":"a","v":1}])") == RefusalReason::kUnsupported);
  CHECK(RefusalOf(R"([{"bver":42,"n":"a","v":1}])") == RefusalReason::kUnsupported);
  CHECK(Decode(R"([{"bver":26,"n":"a","u":"kWh","v":1}])").version == 26);
  CHECK(RefusalOf(R"([{"bver":10,"n":"a","v":1},{"bver":5,"n":"b","v":1}])") ==
        RefusalReason::kMalformed);
  CHECK(RefusalOf(R"([{"bver":10.5,"n":"a","v":1}])") == RefusalReason::kMalformed);
}

TEST_CASE("malformed SenML JSON is refused") {
  const char* bad[] = {
      "", "{}", "[", "[1]", "[[]]", R"({"n":"a","v":1})", "[{\"n\":\"a\",\"v\":1}] x",
      R"([{"n":"a","v":1,"v":2}])",         // duplicate label
      R"([{"n":"a","n":"b","v":1}])",       // duplicate label
      R"([{"n":"a","v":"1"}])",             // wrong type
      R"([{"n":"a","vb":1}])",              // wrong type
      R"([{"n":"a"}])",                     // no value, no sum
      R"([{"n":"a","v":1,"vs":"x"}])",      // two value fields
      R"([{"n":"-a","v":1}])",              // first character not alphanumeric
      R"([{"n":"a b","v":1}])",             // space in name
      R"([{"n":"a","vd":"!!"}])",           // not base64url
      R"([{"n":"a","v":1,"ut":-1}])",       // negative update time
      R"([{"v":1}])",                       // empty name
      R"([{"n":"a","v":1e400}])",           // not finite
  };
  for (const char* text : bad) {
    CAPTURE(text);
    CHECK(RefusalOf(text) == RefusalReason::kMalformed);
  }
}

TEST_CASE("name rules of RFC 8428 section 4.5.1") {
  CHECK(IsValidSenmlName("urn:dev:ow:10e2073a01080063"));
  CHECK(IsValidSenmlName("2001:db8::2/temperature"));
  CHECK(IsValidSenmlName("a-b.c/d_e:f"));
  CHECK(!IsValidSenmlName(""));
  CHECK(!IsValidSenmlName("_a"));
  CHECK(!IsValidSenmlName("/a"));
  CHECK(!IsValidSenmlName("a+b"));
  CHECK(!IsValidSenmlName("caf\xc3\xa9"));
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
