// tests/ingest/cbor_reader_test.cpp
// The CBOR decoder against the examples of RFC 8949 Appendix A.
#include <doctest/doctest.h>

#include <cmath>

#include "daemon/ingest/cbor_reader.h"
#include "tests/ingest/hex.h"

namespace ampledger {
namespace {

using testing::FromHex;

CborItem Decode(const std::string& hex) {
  Result<CborItem> item = DecodeCbor(FromHex(hex));
  REQUIRE_MESSAGE(item.ok(), item.status().ToString());
  return std::move(item).value();
}

TEST_SUITE("ingest") {

TEST_CASE("RFC 8949 Appendix A: integers") {
  CHECK(*Decode("00").AsInt64() == 0);
  CHECK(*Decode("17").AsInt64() == 23);
  CHECK(*Decode("1818").AsInt64() == 24);
  CHECK(*Decode("1903e8").AsInt64() == 1000);
  CHECK(*Decode("1a000f4240").AsInt64() == 1000000);
  CHECK(*Decode("1b000000e8d4a51000").AsInt64() == 1000000000000);
  CHECK(Decode("1bffffffffffffffff").value == 18446744073709551615u);
  CHECK(!Decode("1bffffffffffffffff").AsInt64());
  CHECK(*Decode("20").AsInt64() == -1);
  CHECK(*Decode("3863").AsInt64() == -100);
  CHECK(*Decode("3903e7").AsInt64() == -1000);
  CHECK(Decode("3bffffffffffffffff").AsDouble() == -18446744073709551616.0);
}

TEST_CASE("RFC 8949 Appendix A: half, single and double floats") {
  CHECK(Decode("f90000").number == 0.0);
  CHECK(std::signbit(Decode("f98000").number));
  CHECK(Decode("f93c00").number == 1.0);
  CHECK(Decode("fb3ff199999999999a").number == 1.1);
  CHECK(Decode("f93e00").number == 1.5);
  CHECK(Decode("f97bff").number == 65504.0);
  CHECK(Decode("fa47c35000").number == 100000.0);
  CHECK(Decode("fa7f7fffff").number == 3.4028234663852886e+38);
  CHECK(Decode("fb7e37e43c8800759c").number == 1.0e+300);
  CHECK(Decode("f90001").number == 5.960464477539063e-8);
  CHECK(Decode("f90400").number == 0.00006103515625);
  CHECK(Decode("f9c400").number == -4.0);
  CHECK(Decode("fbc010666666666666").number == -4.1);
  CHECK(std::isinf(Decode("f97c00").number));
  CHECK(std::isnan(Decode("f97e00").number));
  CHECK(Decode("f9fc00").number == -INFINITY);
  CHECK(std::isinf(Decode("fa7f800000").number));
}

TEST_CASE("RFC 8949 Appendix A: simple values, strings, arrays, maps, tags") {
  CHECK(Decode("f4").IsBool());
  CHECK(Decode("f5").value == 21);
  CHECK(Decode("f6").IsNull());
  CHECK(Decode("f7").value == 23);
  CHECK(Decode("f0").value == 16);
  CHECK(Decode("f8ff").value == 255);
  CHECK(Decode("60").bytes.empty());
  CHECK(Decode("6449455446").bytes == "IETF");
  CHECK(Decode("62c3bc").bytes == "\xc3\xbc");
  CHECK(Decode("4401020304").bytes == FromHex("01020304"));
  const CborItem nested = Decode("8301820203820405");
  REQUIRE(nested.items.size() == 3);
  CHECK(nested.items[2].items[1].value == 5);
  const CborItem map = Decode("a201020304");
  CHECK(map.type == CborItem::Type::kMap);
  CHECK(map.MapSize() == 2);
  const CborItem tagged = Decode("c074323031332d30332d32315432303a30343a30305a");
  CHECK(tagged.type == CborItem::Type::kTag);
  CHECK(tagged.value == 0);
  CHECK(tagged.items[0].bytes == "2013-03-21T20:04:00Z");
}

TEST_CASE("RFC 8949 Appendix A: indefinite lengths") {
  CHECK(Decode("5f42010243030405ff").bytes == FromHex("0102030405"));
  CHECK(Decode("7f657374726561646d696e67ff").bytes == "streaming");
  CHECK(Decode("9fff").items.empty());
  CHECK(Decode("9f018202039f0405ffff").items.size() == 3);
  const CborItem map = Decode("bf61610161629f0203ffff");
  CHECK(map.MapSize() == 2);
  CHECK(map.items[3].items.size() == 2);
}

TEST_CASE("malformed CBOR is refused without reading past the input") {
  const char* bad[] = {
      "",            // nothing
      "18",          // truncated argument
      "1c",          // reserved additional information 28
      "62c3",        // text shorter than its length
      "5b" "ffffffffffffffff",  // a huge declared length
      "9b" "ffffffffffffffff",  // a huge array with no items
      "8301",        // array shorter than declared
      "ff",          // break outside an indefinite container
      "5f01ff",      // chunk of the wrong type in an indefinite bstr
      "5f5f4101ffff",// nested indefinite chunk
      "62c328",      // invalid UTF-8
      "63eda080",    // a UTF-16 surrogate encoded in UTF-8
      "f818",        // two-byte simple value below 32
      "0000",        // trailing bytes
      "a1",          // map without its pair
      "a101",        // map with a key and no value
      "9f01",        // unterminated indefinite array
  };
  for (const char* hex : bad) {
    CAPTURE(hex);
    CHECK(!DecodeCbor(FromHex(hex)).ok());
  }
}

TEST_CASE("nesting is bounded") {
  std::string deep(kMaxCborDepth + 1, static_cast<char>(0x81));
  deep.push_back(0x00);
  CHECK(!DecodeCbor(deep).ok());
  std::string ok(kMaxCborDepth, static_cast<char>(0x81));
  ok.push_back(0x00);
  CHECK(DecodeCbor(ok).ok());
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
