// tests/ingest/cbor_writer_test.cpp
// The CBOR encoder against the examples of RFC 8949 Appendix A, and round trips.
#include <doctest/doctest.h>

#include <cmath>
#include <limits>

#include "daemon/ingest/cbor_reader.h"
#include "daemon/ingest/cbor_writer.h"
#include "tests/ingest/hex.h"

namespace ampledger {
namespace {

using testing::ToHex;

std::string NumberHex(double value) {
  CborWriter w;
  w.Number(value);
  return ToHex(w.bytes());
}

TEST_SUITE("ingest") {

TEST_CASE("RFC 8949 Appendix A: encoded integers, strings and containers") {
  CborWriter w;
  w.Array(3);
  w.Unsigned(1000);
  w.Int(-1000);
  w.Text("IETF");
  CHECK(ToHex(w.bytes()) == "83" "1903e8" "3903e7" "6449455446");
  CborWriter m;
  m.Map(2);
  m.Int(1);
  m.Int(2);
  m.Tag(17);
  m.Bytes(std::string("\x01\x02", 2));
  m.Bool(true);
  CHECK(ToHex(m.bytes()) == "a2" "01" "02" "d1" "420102" "f5");
  CborWriter big;
  big.Unsigned(18446744073709551615u);
  CHECK(ToHex(big.bytes()) == "1bffffffffffffffff");
}

TEST_CASE("numbers use the preferred serialization (RFC 8949 section 4.2.2)") {
  // Whole numbers become integers; others the shortest exact float. Expected bytes from
  // RFC 8949 Appendix A.
  CHECK(NumberHex(0) == "00");
  CHECK(NumberHex(-4) == "23");
  CHECK(NumberHex(1.5) == "f93e00");
  CHECK(NumberHex(-4.1) == "fbc010666666666666");
  CHECK(NumberHex(1.1) == "fb3ff199999999999a");
  CHECK(NumberHex(5.960464477539063e-8) == "f90001");
  CHECK(NumberHex(0.00006103515625) == "f90400");
  CHECK(NumberHex(3.4028234663852886e+38) == "fa7f7fffff");
  CHECK(NumberHex(std::numeric_limits<double>::infinity()) == "f97c00");
  CHECK(NumberHex(std::nan("")) == "f97e00");
  CHECK(NumberHex(-0.0) == "f98000");
  CHECK(NumberHex(1e300) == "fb7e37e43c8800759c");
}

TEST_CASE("every written number reads back exactly") {
  const double values[] = {0.1, 120.1, 1276020076.001, -3.25, 65504.5, 1e-310, 7.0e22, 0.333333};
  for (const double v : values) {
    CAPTURE(v);
    CborWriter w;
    w.Number(v);
    REQUIRE(CheckCbor(w.bytes()).ok());
    CHECK(CborReader(w.bytes()).Read().AsDouble() == v);
  }
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
