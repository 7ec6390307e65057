// tests/metering/meter_interval_test.cpp
#include "daemon/metering/meter_interval.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1800000000000;  // 2027-01-15T08:00:00Z
constexpr UnixMs kQuarter = 900000;

std::vector<MeterInterval> Quarters(std::vector<double> wh) {
  std::vector<MeterInterval> intervals;
  for (size_t i = 0; i < wh.size(); ++i) {
    const UnixMs start = kT0 + static_cast<UnixMs>(i) * kQuarter;
    intervals.push_back({{start, start + kQuarter}, wh[i]});
  }
  return intervals;
}

TEST_SUITE("metering") {

TEST_CASE("whole intervals add up; a partly covered one counts in proportion") {
  std::vector<MeterInterval> intervals = Quarters({100, 200, 300, 400});
  Result<MeterEnergy> all = MeterIntervalEnergy(intervals, {kT0, kT0 + 4 * kQuarter});
  REQUIRE(all.ok());
  CHECK(all->kwh == doctest::Approx(1.0));
  // The second half of the first quarter and the first third of the last.
  Result<MeterEnergy> part =
      MeterIntervalEnergy(intervals, {kT0 + kQuarter / 2, kT0 + 3 * kQuarter + kQuarter / 3});
  REQUIRE(part.ok());
  CHECK(part->kwh == doctest::Approx((50 + 200 + 300 + 400.0 / 3) / 1000));
}

TEST_CASE("a gap or a range past the last interval is not covered") {
  std::vector<MeterInterval> intervals = Quarters({100, 200, 300});
  intervals.erase(intervals.begin() + 1);
  Result<MeterEnergy> gap = MeterIntervalEnergy(intervals, {kT0, kT0 + 3 * kQuarter});
  REQUIRE(!gap.ok());
  CHECK(gap.status().message() == "main meter interval reads do not cover 2027-01-15T08:15:00Z");
  Result<MeterEnergy> past = MeterIntervalEnergy(Quarters({1}), {kT0, kT0 + 2 * kQuarter});
  CHECK(past.status().code() == StatusCode::kNotFound);
  Result<MeterEnergy> before = MeterIntervalEnergy(Quarters({1}), {kT0 - 1, kT0 + kQuarter});
  CHECK(before.status().message() == "main meter interval reads do not cover 2027-01-15T07:59:59Z");
}

TEST_CASE("CheckMeterIntervals sorts and refuses bad intervals") {
  std::vector<MeterInterval> intervals = Quarters({1, 2});
  std::swap(intervals[0], intervals[1]);
  REQUIRE(CheckMeterIntervals(intervals).ok());
  CHECK(intervals[0].wh == 1);
  std::vector<MeterInterval> empty = {{{kT0, kT0}, 1}};
  CHECK(CheckMeterIntervals(empty).message() ==
        "interval 2027-01-15T08:00:00Z to 2027-01-15T08:00:00Z: must end after it starts");
  std::vector<MeterInterval> long_one = {{{kT0, kT0 + 3 * 86400000LL}, 1}};
  CHECK(CheckMeterIntervals(long_one).message() ==
        "interval 2027-01-15T08:00:00Z to 2027-01-18T08:00:00Z: longer than 2 days");
}

TEST_CASE("interval reads come first; typed-in reads fill in where they do not cover") {
  std::vector<MainMeterRead> reads(2);
  reads[0].at_ms = kT0 - 86400000;
  reads[0].kwh = 1000;
  reads[1].at_ms = kT0 + 86400000;
  reads[1].kwh = 1048;  // 1 kWh per hour between the reads
  const TimeRange hour{kT0, kT0 + 4 * kQuarter};
  Result<MeterEnergy> intervals = MainMeterEnergyFromAll(Quarters({100, 100, 100, 100}), reads, hour);
  REQUIRE(intervals.ok());
  CHECK(intervals->kwh == doctest::Approx(0.4));
  Result<MeterEnergy> registers = MainMeterEnergyFromAll(Quarters({100}), reads, hour);
  REQUIRE(registers.ok());
  CHECK(registers->kwh == doctest::Approx(1.0));
  CHECK(registers->basis == "main meter register reads");
  Result<MeterEnergy> neither = MainMeterEnergyFromAll(Quarters({100}), {}, hour);
  REQUIRE(!neither.ok());
  CHECK(neither.status().message().rfind(
            "main meter interval reads do not cover 2027-01-15T08:15:00Z; ", 0) == 0);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
