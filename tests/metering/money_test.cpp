// tests/metering/money_test.cpp
#include "daemon/metering/money.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

TEST_SUITE("metering") {
  TEST_CASE("prices become whole micro-units") {
    CHECK(ToMicros(0.0475) == 47'500);
    CHECK(ToMicros(0.04362) == 43'620);
    CHECK(ToMicros(-7.5) == -7'500'000);
  }

  TEST_CASE("quantity x price: 550 kWh x 0.0475 is exactly 26.125") {
    CHECK(Times(550, ToMicros(0.0475)) == 26'125'000);
    CHECK(Times(549.99999999, ToMicros(0.0475)) == 26'125'000);
  }

  TEST_CASE("half-up rounds half away from zero, so a credit mirrors its charge") {
    CHECK(RoundToCent(26'125'000, RoundingMode::kHalfUp) == 26'130'000);
    CHECK(RoundToCent(-26'125'000, RoundingMode::kHalfUp) == -26'130'000);
    CHECK(RoundToCent(26'124'999, RoundingMode::kHalfUp) == 26'120'000);
    CHECK(RoundToCent(2'751'300, RoundingMode::kHalfUp) == 2'750'000);
  }

  TEST_CASE("half-even rounds a half to the even cent") {
    CHECK(RoundToCent(26'125'000, RoundingMode::kHalfEven) == 26'120'000);
    CHECK(RoundToCent(26'135'000, RoundingMode::kHalfEven) == 26'140'000);
    CHECK(RoundToCent(-26'125'000, RoundingMode::kHalfEven) == -26'120'000);
  }

  TEST_CASE("percentages are exact in 128 bits") {
    CHECK(PercentOf(275'130'000, 1) == 2'751'300);
    CHECK(PercentOf(89'260'000, -23.5) == -20'976'100);
    CHECK(PercentOf(9'000'000'000'000'000, 13) == 1'170'000'000'000'000);
  }

  TEST_CASE("formatting") {
    CHECK(FormatCents(171'550'000) == "171.55");
    CHECK(FormatCents(-500'000) == "-0.50");
    CHECK(FormatCents(0) == "0.00");
    CHECK(FormatPrice(47'500) == "0.0475");
    CHECK(FormatPrice(7'500'000) == "7.50");
  }
}

}  // namespace
}  // namespace ampledger
