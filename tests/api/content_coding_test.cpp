// tests/api/content_coding_test.cpp
#include "api/content_coding.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

TEST_SUITE("api") {

TEST_CASE("ChooseContentCoding: the examples of RFC 9110 section 12.5.3") {
  CHECK(ChooseContentCoding("compress, gzip") == "gzip");
  CHECK(ChooseContentCoding("") == "");  // the empty field value: no coding wanted
  CHECK(ChooseContentCoding("*") == "gzip");
  CHECK(ChooseContentCoding("compress;q=0.5, gzip;q=1.0") == "gzip");
  CHECK(ChooseContentCoding("gzip;q=1.0, identity; q=0.5, *;q=0") == "gzip");
}

TEST_CASE("ChooseContentCoding: never Brotli, and a zero weight refuses") {
  CHECK(ChooseContentCoding("br") == "");
  CHECK(ChooseContentCoding("gzip, deflate, br") == "gzip");  // what browsers send
  CHECK(ChooseContentCoding("br, gzip;q=0") == "");
  CHECK(ChooseContentCoding("gzip;q=0.000") == "");  // RFC 9110 12.4.2: up to 3 decimals
  CHECK(ChooseContentCoding("gzip;q=0.001") == "gzip");
  CHECK(ChooseContentCoding("*;q=0.5, gzip;q=0") == "");  // named beats "*"
  CHECK(ChooseContentCoding("*;q=0") == "");
  CHECK(ChooseContentCoding("GZip") == "gzip");  // coding names are case-insensitive
  CHECK(ChooseContentCoding("x-gzip") == "gzip");  // RFC 9110 8.4.1.3: same as gzip
  CHECK(ChooseContentCoding(" gzip ; Q=0.8 ") == "gzip");
  CHECK(ChooseContentCoding("identity") == "");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
