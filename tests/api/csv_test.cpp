// tests/api/csv_test.cpp
#include "api/csv.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE("CsvField quotes as RFC 4180 section 2 rules 5 to 7 say") {
    CHECK(CsvField("a-heat") == "a-heat");
    CHECK(CsvField("") == "");
    CHECK(CsvField("hall, upstairs") == "\"hall, upstairs\"");
    CHECK(CsvField("the \"new\" dryer") == "\"the \"\"new\"\" dryer\"");
    CHECK(CsvField("two\r\nlines") == "\"two\r\nlines\"");
    CHECK(CsvNumber(1234.5678) == "1234.57");
    CHECK(CsvNumber(0) == "0");
    CHECK(CsvNumber(-0.25) == "-0.25");
  }
}

}  // namespace
}  // namespace ampledger
