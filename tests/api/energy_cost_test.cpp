// tests/api/energy_cost_test.cpp
// ConsumptionBuckets and PriceBuckets on hand-made buckets: export circuits left out, circuits
// added bucket by bucket, and lines of the same period from two tariffs summed as one period.
#include "api/energy_cost.h"

#include <doctest/doctest.h>

#include "metering/bill_test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;

constexpr UnixMs kJuly1 = 1782864000000;  // 2026-07-01T00:00:00Z

CircuitBucket Bucket(UnixMs start, double wh) {
  CircuitBucket bucket;
  bucket.start_ms = start;
  bucket.real_wh = wh;
  return bucket;
}

TEST_SUITE("api") {
  TEST_CASE("ConsumptionBuckets adds consumption circuits per bucket and leaves export out") {
    Config config;
    config.circuits.resize(3);
    config.circuits[2].direction = Direction::kExport;
    const std::vector<std::vector<CircuitBucket>> buckets = {
        {Bucket(kJuly1, 100), Bucket(kJuly1 + kMsPerBucket, 50)},
        {Bucket(kJuly1 + kMsPerBucket, 25)},
        {Bucket(kJuly1, 900)}};
    const std::vector<BucketEnergy> energy = ConsumptionBuckets(config, {0, 1, 2}, buckets);
    REQUIRE(energy.size() == 2);
    CHECK(energy[0].start_ms == kJuly1);
    CHECK(energy[0].kwh == doctest::Approx(0.1));
    CHECK(energy[1].kwh == doctest::Approx(0.075));
  }

  TEST_CASE("PriceBuckets sums a period across a tariff change as one row") {
    Config config;
    config.site.time_zone = "UTC";
    config.site.tariff = "old";
    config.site.tariff_changes = {{2026_y / 7 / 1, "new"}};
    TariffConfig old_rates, new_rates;
    old_rates.rates = testing::FlatRates(0.10);
    new_rates.rates = testing::FlatRates(0.20);
    config.tariffs = {{"old", "/lib/old.toml", old_rates}, {"new", "/lib/new.toml", new_rates}};
    Result<TariffSchedule> schedule = TariffSchedule::Create(config);
    REQUIRE(schedule.ok());
    const LocalTime utc = LocalTime::ForZone("UTC").value();
    // 2 kWh in the last quarter hour of June at 0.10, 3 kWh in the first of July at 0.20.
    Result<EnergyCost> cost =
        PriceBuckets(*schedule, utc, {{kJuly1 - kMsPerBucket, 2.0}, {kJuly1, 3.0}});
    REQUIRE(cost.ok());
    CHECK(cost->kwh == doctest::Approx(5.0));
    CHECK(cost->cost == doctest::Approx(0.2 + 0.6));
    REQUIRE(cost->periods.size() == 1);
    CHECK(cost->periods[0].kwh == doctest::Approx(5.0));
    CHECK(cost->periods[0].cost == doctest::Approx(0.8));
  }
}

}  // namespace
}  // namespace ampledger
