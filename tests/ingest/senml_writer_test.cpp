// tests/ingest/senml_writer_test.cpp
#include <doctest/doctest.h>

#include "daemon/ingest/senml.h"
#include "daemon/ingest/senml_writer.h"
#include "tests/ingest/hex.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

// The RFC 8428 section 5.1.2b pack as records.
std::vector<SenmlOutRecord> Rfc8428Example() {
  std::vector<SenmlOutRecord> records;
  SenmlOutRecord first;
  first.base_name = "urn:dev:ow:10e2073a0108006:";
  first.base_time = 1.276020076001e+09;
  first.base_unit = "A";
  first.version = 5;
  first.name = "voltage";
  first.unit = "V";
  first.value = 120.1;
  records.push_back(first);
  const double values[] = {1.2, 1.3, 1.4, 1.5, 1.6, 1.7};
  for (int i = 0; i < 6; ++i) {
    SenmlOutRecord r;
    r.name = "current";
    r.value = values[i];
    if (i < 5) r.time = i - 5;
    records.push_back(r);
  }
  return records;
}

TEST_SUITE("ingest") {

TEST_CASE("written SenML CBOR and JSON read back as the same records") {
  const std::vector<SenmlOutRecord> records = Rfc8428Example();
  const double now = 1700000000;
  DecodeResult<SenmlPack> from_cbor = DecodeSenmlCbor(WriteSenmlCbor(records), now);
  DecodeResult<SenmlPack> from_json = DecodeSenmlJson(WriteSenmlJson(records), now);
  REQUIRE(from_cbor.ok());
  REQUIRE(from_json.ok());
  REQUIRE(from_cbor->records.size() == 7);
  CHECK(from_cbor->version == 5);
  for (std::size_t i = 0; i < 7; ++i) {
    CHECK(from_cbor->records[i].name == from_json->records[i].name);
    CHECK(from_cbor->records[i].time == from_json->records[i].time);
    CHECK(*from_cbor->records[i].value == *from_json->records[i].value);
  }
  CHECK(from_cbor->records[0].time == 1.276020076001e+09 - 5);
}

TEST_CASE("the RFC 8428 section 6 pack is written byte for byte as the RFC prints it") {
  // Source: RFC 8428 section 6 hex (tests/reference/data/senml/rfc8428-6-cbor-example.cbor):
  // same label order, 1.5 as a half float, 120.1 as a double; the RFC writes t 0 on the last
  // record, so we do too here.
  std::vector<SenmlOutRecord> records = Rfc8428Example();
  records.back().time = 0;
  const std::string rfc = testing::ReadFile(testing::ReferenceDir() / "senml" /
                                            "rfc8428-6-cbor-example.cbor");
  CHECK(testing::ToHex(WriteSenmlCbor(records)) == testing::ToHex(rfc));
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
