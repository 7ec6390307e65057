// tests/metering/reconciliation_test.cpp
#include "daemon/metering/reconciliation.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1800000000000;  // 2027-01-15T08:00:00Z, a bucket boundary
constexpr UnixMs kHour = 3600000;

std::vector<CircuitBucket> Flat(UnixMs from, int buckets, double wh, double coverage = 1) {
  std::vector<CircuitBucket> out;
  for (int i = 0; i < buckets; ++i) {
    CircuitBucket bucket;
    bucket.start_ms = from + i * kMsPerBucket;
    bucket.real_wh = wh;
    bucket.coverage = coverage;
    out.push_back(bucket);
  }
  return out;
}

TEST_SUITE("metering") {

TEST_CASE("remainder and ratio per period, from interval reads") {
  const std::vector<TimeRange> hours = {{kT0, kT0 + kHour}, {kT0 + kHour, kT0 + 2 * kHour}};
  // Main meter: 1.2 kWh in the first hour, 1.0 kWh in the second (hourly intervals).
  const std::vector<MeterInterval> intervals = {{hours[0], 1200}, {hours[1], 1000}};
  // Two consumption circuits of 100 Wh and 150 Wh a quarter hour: 1.0 kWh an hour.
  const std::vector<std::vector<CircuitBucket>> drawn = {Flat(kT0, 8, 100), Flat(kT0, 8, 150)};
  const std::vector<std::vector<CircuitBucket>> solar = {Flat(kT0 + kHour, 4, 50)};
  std::vector<ReconciliationRow> rows = Reconcile(hours, drawn, solar, intervals, {});
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].submetered_kwh == doctest::Approx(1.0));
  CHECK(*rows[0].main_meter_kwh == doctest::Approx(1.2));
  CHECK(*rows[0].remainder_kwh == doctest::Approx(0.2));
  CHECK(*rows[0].ratio == doctest::Approx(1.0 / 1.2));
  CHECK(rows[0].coverage == doctest::Approx(1.0));
  CHECK(rows[0].exported_kwh == 0);
  CHECK(rows[1].exported_kwh == doctest::Approx(0.2));
  CHECK(*rows[1].remainder_kwh == doctest::Approx(0.0));
  CHECK(*rows[1].ratio == doctest::Approx(1.0));
  CHECK(rows[1].main_meter_basis == "main meter interval reads");
}

TEST_CASE("a period the main meter does not cover says why, with no remainder or ratio") {
  const std::vector<TimeRange> hours = {{kT0, kT0 + kHour}};
  std::vector<ReconciliationRow> rows =
      Reconcile(hours, {Flat(kT0, 2, 100, 0.5)}, {}, {}, {});
  REQUIRE(rows.size() == 1);
  CHECK(rows[0].submetered_kwh == doctest::Approx(0.2));
  CHECK(rows[0].coverage == doctest::Approx(0.25));  // 2 buckets of 4, each half measured
  CHECK(!rows[0].main_meter_kwh);
  CHECK(!rows[0].remainder_kwh);
  CHECK(!rows[0].ratio);
  CHECK(!rows[0].main_meter_basis.empty());
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
