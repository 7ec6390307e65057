// tests/metering/calibration_test.cpp
#include "daemon/metering/calibration.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

TEST_SUITE("metering") {
  TEST_CASE("calibrate: the gain scales the reading onto the reference") {
    // The channel read 10.3 A while a reference meter read 10.0 A: 3 % high.
    Result<Calibration> result = CalibrateGain(1.0, 10.3, 10.0);
    REQUIRE(result.ok());
    CHECK(result->new_gain == doctest::Approx(10.0 / 10.3));
    CHECK(result->error_percent == doctest::Approx(3.0));
    // Applying the new gain to the raw reading gives the reference.
    CHECK(10.3 * result->new_gain == doctest::Approx(10.0));
  }

  TEST_CASE("calibrate: a second calibration composes with the gain already applied") {
    // With gain 1.012 the channel read 5.06 A (5.0 A before the gain) where the reference read
    // 5.0 A: the uncorrected reading was right, so the gain goes back to 1.
    Result<Calibration> result = CalibrateGain(1.012, 5.06, 5.0);
    REQUIRE(result.ok());
    CHECK(result->new_gain == doctest::Approx(1.0));
  }

  TEST_CASE("calibrate: a gain outside the config's range is refused with a reason") {
    CHECK(CalibrateGain(1.0, 20, 10).ok());  // exactly 0.5 is accepted
    Result<Calibration> doubled = CalibrateGain(1.0, 25, 10);
    REQUIRE(!doubled.ok());
    CHECK(doubled.status().message() ==
          "the new gain would be 0.400000, outside the 0.5 to 2 a channel accepts: check the "
          "CT's ratio, that only one conductor passes through it, and that nothing else on the "
          "circuit was running");
    CHECK(!CalibrateGain(1.0, 4, 10).ok());  // 2.5
  }

  TEST_CASE("calibrate: inputs must be above 0") {
    CHECK(CalibrateGain(0, 1, 1).status().message() ==
          "current-gain: expected a number above 0, got 0.000000");
    CHECK(!CalibrateGain(1, 0, 1).ok());
    CHECK(!CalibrateGain(1, 1, -1).ok());
  }

  TEST_CASE("calibrate: current of a known resistive load") {
    // Ohm's law with P = V^2 / R (physics; from memory): a heater rated 1500 W at 120 V is
    // 9.6 ohm, so it draws 118 / 9.6 = 12.2917 A on a 118 V line.
    CHECK(*ResistiveLoadAmps(1500, 120, 118) == doctest::Approx(118 / 9.6));
    // At its rated voltage it draws P / V: 2000 W at 230 V is 8.696 A.
    CHECK(*ResistiveLoadAmps(2000, 230, 230) == doctest::Approx(2000.0 / 230));
    CHECK(ResistiveLoadAmps(0, 230, 230).status().message() ==
          "load-watts: expected a number above 0, got 0.000000");
    CHECK(!ResistiveLoadAmps(2000, 230, -1).ok());
  }
}

}  // namespace
}  // namespace ampledger
