// tests/metering/main_meter_test.cpp
// Main-meter energy from register and period reads, and which new reads are refused.
#include "daemon/metering/main_meter.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

constexpr UnixMs kHour = 3'600'000;

MainMeterRead Register(std::int64_t id, UnixMs at, double kwh) {
  return {id, MeterReadKind::kRegister, at, 0, kwh, "typed in"};
}
MainMeterRead Period(std::int64_t id, UnixMs from, UnixMs to, double kwh) {
  return {id, MeterReadKind::kPeriod, to, from, kwh, "utility bill"};
}

TEST_SUITE("metering") {
  TEST_CASE("register reads: exact at the bounds, or interpolated linearly in time") {
    std::vector<MainMeterRead> reads = {Register(1, 0, 100), Register(2, 10 * kHour, 110),
                                        Register(3, 30 * kHour, 150)};
    CHECK(MainMeterEnergy(reads, {0, 10 * kHour})->kwh == doctest::Approx(10));
    // 5 h: 105; 20 h: 110 + 40 x 10/20 = 130.
    CHECK(MainMeterEnergy(reads, {5 * kHour, 20 * kHour})->kwh == doctest::Approx(25));
    Result<MeterEnergy> outside = MainMeterEnergy(reads, {5 * kHour, 31 * kHour});
    CHECK(outside.status().code() == StatusCode::kNotFound);
  }

  TEST_CASE("period reads: prorated by their overlap, gaps are not covered") {
    std::vector<MainMeterRead> reads = {Period(1, 0, 10 * kHour, 50),
                                        Period(2, 10 * kHour, 20 * kHour, 100)};
    // 8 h of the first (40) and 2 h of the second (20).
    CHECK(MainMeterEnergy(reads, {2 * kHour, 12 * kHour})->kwh == doctest::Approx(60));
    Result<MeterEnergy> beyond = MainMeterEnergy(reads, {2 * kHour, 21 * kHour});
    REQUIRE(!beyond.ok());
    CHECK(beyond.status().message() ==
          "main meter period reads cover 1970-01-01T02:00:00Z to 1970-01-01T20:00:00Z only, not "
          "up to 1970-01-01T21:00:00Z");
    std::vector<MainMeterRead> gap = {Period(1, 0, 10 * kHour, 50),
                                      Period(2, 11 * kHour, 20 * kHour, 100)};
    CHECK(MainMeterEnergy(gap, {0, 20 * kHour}).status().code() == StatusCode::kNotFound);
  }

  TEST_CASE("registers win over periods when both cover the span") {
    std::vector<MainMeterRead> reads = {Period(1, 0, 10 * kHour, 50), Register(2, 0, 100),
                                        Register(3, 10 * kHour, 160)};
    Result<MeterEnergy> energy = MainMeterEnergy(reads, {0, 10 * kHour});
    CHECK(energy->kwh == doctest::Approx(60));
    CHECK(energy->basis == "main meter register reads");
  }

  TEST_CASE("new reads that contradict stored ones are refused, naming the stored read") {
    std::vector<MainMeterRead> stored = {Register(1, 0, 100), Register(2, 10 * kHour, 110),
                                         Period(3, 0, 10 * kHour, 50)};
    CHECK(CheckNewMeterRead(stored, Register(0, 5 * kHour, 104)).ok());
    CHECK(CheckNewMeterRead(stored, Register(0, 5 * kHour, 99)).message() ==
          "register 99 kWh at 1970-01-01T05:00:00Z would make the register count "
          "backwards against the register read at 1970-01-01T00:00:00Z (read 1) of "
          "100 kWh");
    CHECK(CheckNewMeterRead(stored, Register(0, 10 * kHour, 110)).message() ==
          "register 110 kWh at 1970-01-01T10:00:00Z has the same time as the register "
          "read at 1970-01-01T10:00:00Z (read 2) of 110 kWh");
    CHECK(CheckNewMeterRead(stored, Period(0, 9 * kHour, 12 * kHour, 5)).message() ==
          "the period overlaps the period read 1970-01-01T00:00:00Z to 1970-01-01T10:00:00Z "
          "(read 3)");
    CHECK(CheckNewMeterRead(stored, Period(0, 10 * kHour, 12 * kHour, 5)).ok());
    CHECK(CheckNewMeterRead(stored, Period(0, 12 * kHour, 12 * kHour, 5)).message() ==
          "a period must end after it starts");
    CHECK(CheckNewMeterRead(stored, Register(0, 20 * kHour, -1)).message() ==
          "kWh must be a number from 0 to 1e9");
  }
}

}  // namespace
}  // namespace ampledger
