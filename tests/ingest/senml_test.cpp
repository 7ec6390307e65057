// tests/ingest/senml_test.cpp
// SenML CBOR (RFC 8428 section 6) and the resolution rules shared with JSON.
#include <doctest/doctest.h>

#include <string>

#include "daemon/ingest/senml.h"
#include "tests/ingest/hex.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

using testing::FromHex;

constexpr double kNow = 1700000000.0;

RefusalReason CborRefusal(const std::string& bytes) {
  DecodeResult<SenmlPack> pack = DecodeSenmlCbor(bytes, kNow);
  REQUIRE(!pack.ok());
  return pack.reason();
}

TEST_SUITE("ingest") {

TEST_CASE("RFC 8428 section 6 CBOR example decodes to the same records as its JSON form") {
  // Source: RFC 8428 section 6 (hex dump of the 5.1.2b pack), tests/reference/data/senml.
  const std::string dir = (testing::ReferenceDir() / "senml").string();
  const std::string cbor = testing::ReadFile(dir + "/rfc8428-6-cbor-example.cbor");
  std::string hex = testing::ReadFile(dir + "/rfc8428-6-cbor-example.hex");
  while (!hex.empty() && (hex.back() == '\n' || hex.back() == ' ')) hex.pop_back();
  REQUIRE(cbor.size() == 195);
  CHECK(FromHex(hex) == cbor);
  DecodeResult<SenmlPack> from_cbor = DecodeSenmlCbor(cbor, kNow);
  DecodeResult<SenmlPack> from_json = DecodeSenmlJson(
      testing::ReadFile(dir + "/rfc8428-5.1.2b-multiple-data-points-relative-times.json"), kNow);
  REQUIRE(from_cbor.ok());
  REQUIRE(from_json.ok());
  CHECK(from_cbor->version == from_json->version);
  REQUIRE(from_cbor->records.size() == from_json->records.size());
  for (std::size_t i = 0; i < from_cbor->records.size(); ++i) {
    CAPTURE(i);
    const SenmlRecord& a = from_cbor->records[i];
    const SenmlRecord& b = from_json->records[i];
    CHECK(a.name == b.name);
    CHECK(a.unit == b.unit);
    CHECK(a.time == b.time);
    CHECK(*a.value == *b.value);
  }
  // The 1.5 is a half-precision float, f9 3e00 (SOURCES.md).
  CHECK(cbor.find(FromHex("f93e00")) != std::string::npos);
  CHECK(*from_cbor->records[3].value == 1.5);
}

TEST_CASE("CBOR half-precision values in SenML") {
  // RFC 8949 Appendix A: f9 3c00 = 1.0, f9 c400 = -4.0, f9 0001 = 5.960464477539063e-8.
  const std::string pack = FromHex("81a3006161" "02f9c400" "06f93c00");  // [{0:"a",2:-4.0,6:1.0}]
  DecodeResult<SenmlPack> decoded = DecodeSenmlCbor(pack, kNow);
  REQUIRE(decoded.ok());
  CHECK(*decoded->records[0].value == -4.0);
  CHECK(decoded->records[0].time == kNow + 1.0);
  DecodeResult<SenmlPack> tiny = DecodeSenmlCbor(FromHex("81a2006161" "02f90001"), kNow);
  REQUIRE(tiny.ok());
  CHECK(*tiny->records[0].value == 5.960464477539063e-8);
}

TEST_CASE("CBOR decimal fractions (tag 4) are numbers; other tags are refused") {
  // RFC 8949 section 3.4.4 example: 273.15 = c4 82 21 19 6ab3.
  DecodeResult<SenmlPack> decoded = DecodeSenmlCbor(FromHex("81a2006161" "02c48221196ab3"), kNow);
  REQUIRE(decoded.ok());
  CHECK(*decoded->records[0].value == doctest::Approx(273.15));
  CHECK(CborRefusal(FromHex("81a2006161" "02c11a514b67b0")) == RefusalReason::kUnsupported);
  CHECK(CborRefusal(FromHex("d8" "2081a2006161" "0201")) == RefusalReason::kUnsupported);
  // Self-described CBOR (tag 55799) around the pack is fine.
  CHECK(DecodeSenmlCbor(FromHex("d9d9f781a2006161" "0201"), kNow).ok());
}

TEST_CASE("CBOR SenML labels: duplicates, text labels, must-understand, bver type") {
  CHECK(CborRefusal(FromHex("81a3006161" "0201" "0202")) == RefusalReason::kMalformed);
  // Unknown integer label 99 and unknown text label "zz" are ignored.
  CHECK(DecodeSenmlCbor(FromHex("81a4006161" "0201" "186301" "627a7a01"), kNow).ok());
  // Unknown labels repeated are still duplicates.
  CHECK(CborRefusal(FromHex("81a4006161" "0201" "186301" "186302")) == RefusalReason::kMalformed);
  CHECK(CborRefusal(FromHex("81a4006161" "0201" "627a7a01" "627a7a02")) == RefusalReason::kMalformed);
  // Text label ending in "_": must understand.
  CHECK(CborRefusal(FromHex("81a3006161" "0201" "627a5f01")) == RefusalReason::kUnsupported);
  // bver as a float is not allowed in CBOR (RFC 8428 section 6).
  CHECK(CborRefusal(FromHex("81a3006161" "0201" "20f94900")) == RefusalReason::kMalformed);
  // bver 11 is newer than we know.
  CHECK(CborRefusal(FromHex("81a3006161" "0201" "200b")) == RefusalReason::kUnsupported);
  // A record that is not a map; a pack that is not an array; truncated; trailing bytes.
  CHECK(CborRefusal(FromHex("8101")) == RefusalReason::kMalformed);
  CHECK(CborRefusal(FromHex("a0")) == RefusalReason::kMalformed);
  CHECK(CborRefusal(FromHex("81a2006161")) == RefusalReason::kMalformed);
  CHECK(CborRefusal(FromHex("81a2006161020100")) == RefusalReason::kMalformed);
  // Infinity as a value.
  CHECK(CborRefusal(FromHex("81a2006161" "02f97c00")) == RefusalReason::kMalformed);
}

TEST_CASE("indefinite-length SenSML array (RFC 8428 section 6) decodes") {
  DecodeResult<SenmlPack> decoded = DecodeSenmlCbor(FromHex("9fa2006161" "0201ff"), kNow);
  REQUIRE(decoded.ok());
  CHECK(decoded->records.size() == 1);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
