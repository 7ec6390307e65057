// tests/metering/energy_pricer_test.cpp
// EnergyPricer: a reading's energy spread over the 15-minute buckets it overlaps, each part at
// its bucket's time-of-use price under the tariff in force that local day; the same prices
// TariffSchedule::PriceEnergy gives. Prices and loads are ours; sums checked by hand.
#include "daemon/metering/energy_pricer.h"

#include <doctest/doctest.h>

#include "metering/bill_test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;
using testing::Zone;

constexpr UnixMs kMinute = 60'000;
constexpr UnixMs kHour = 60 * kMinute;

UnixMs Utc(date::year_month_day day, int hour, int minute = 0) {
  return date::sys_days{day}.time_since_epoch().count() * 24 * kHour + hour * kHour +
         minute * kMinute;
}

// "peak" 17:00-19:00 local time every day at `peak`, "base" otherwise at `base`.
TariffConfig Evening(const std::string& title, double peak, double base) {
  TariffConfig config;
  config.rates = {title, {{"all year", date::January / 1, date::December / 31,
                           {{"peak", peak}, {"base", base}},
                           {{"peak", 17 * 60, 19 * 60}}, "base", std::nullopt}}, {}};
  return config;
}

// The "old" tariff, then "new" from local midnight of 2026-03-04 in `zone`.
Config Site(const std::string& zone) {
  Config config;
  config.site.time_zone = zone;
  config.site.tariff = "old";
  config.site.tariff_changes = {{2026_y / 3 / 4, "new"}};
  config.tariffs = {{"old", "/lib/old.toml", Evening("Old", 0.30, 0.10)},
                    {"new", "/lib/new.toml", Evening("New", 0.50, 0.20)}};
  return config;
}

TariffSchedule Schedule(const Config& config) {
  Result<TariffSchedule> schedule = TariffSchedule::Create(config);
  REQUIRE_MESSAGE(schedule.ok(), schedule.status().ToString());
  return std::move(schedule).value();
}

TEST_SUITE("metering") {
  TEST_CASE("energy pricer: a reading across a period boundary is priced in proportion") {
    Config config = Site("UTC");
    TariffSchedule schedule = Schedule(config);
    EnergyPricer pricer(schedule, Zone("UTC"));
    // 1 kWh over 16:50-17:10 on 2026-03-02: 10 minutes at base, 10 at peak.
    CHECK(pricer.Cost(Utc(2026_y / 3 / 2, 16, 50), Utc(2026_y / 3 / 2, 17, 10), 1000) ==
          doctest::Approx(0.5 * 0.10 + 0.5 * 0.30));
    // Inside one bucket: all at that bucket's price.
    CHECK(pricer.Cost(Utc(2026_y / 3 / 2, 18, 0), Utc(2026_y / 3 / 2, 18, 1), 20) ==
          doctest::Approx(0.020 * 0.30));
    // No duration: priced whole at the bucket holding its start.
    CHECK(pricer.Cost(Utc(2026_y / 3 / 2, 19, 0), Utc(2026_y / 3 / 2, 19, 0), 1000) ==
          doctest::Approx(0.10));
    CHECK(pricer.PricePerKwh(Utc(2026_y / 3 / 2, 18, 45)) == 0.30);
    CHECK(pricer.PricePerKwh(Utc(2026_y / 3 / 2, 19, 0)) == 0.10);
  }

  TEST_CASE("energy pricer: a tariff change applies from local midnight of its date") {
    // America/Chicago is UTC-6 in early March 2026 (CST; DST begins 2026-03-08, IANA tz):
    // local midnight of 2026-03-04 is 06:00Z.
    Config config = Site("America/Chicago");
    TariffSchedule schedule = Schedule(config);
    EnergyPricer pricer(schedule, Zone("America/Chicago"));
    const UnixMs midnight = Utc(2026_y / 3 / 4, 6);
    CHECK(pricer.PricePerKwh(midnight - 15 * kMinute) == 0.10);  // old base
    CHECK(pricer.PricePerKwh(midnight) == 0.20);                 // new base
    // 2 kWh over 23:50-00:10 local: half under each tariff.
    CHECK(pricer.Cost(midnight - 10 * kMinute, midnight + 10 * kMinute, 2000) ==
          doctest::Approx(1 * 0.10 + 1 * 0.20));
    // 17:00 local on the 4th is 23:00Z: the new peak price.
    CHECK(pricer.PricePerKwh(Utc(2026_y / 3 / 4, 23)) == 0.50);
  }

  TEST_CASE("energy pricer: bucket by bucket, the same total as TariffSchedule::PriceEnergy") {
    Config config = Site("America/Chicago");
    TariffSchedule schedule = Schedule(config);
    LocalTime chicago = Zone("America/Chicago");
    EnergyPricer pricer(schedule, chicago);
    // Three local days around the change, a different energy in every bucket.
    std::vector<BucketEnergy> buckets;
    double cost = 0;
    const UnixMs first = Utc(2026_y / 3 / 3, 6);
    for (int k = 0; k < 3 * 96; ++k) {
      const UnixMs start = first + k * kMsPerBucket;
      const double kwh = 0.05 + 0.001 * (k % 17);
      buckets.push_back({start, kwh});
      cost += pricer.Cost(start, start + kMsPerBucket, kwh * 1000);
    }
    Result<std::vector<ScheduledCharges>> charged = schedule.PriceEnergy(chicago, buckets);
    REQUIRE(charged.ok());
    REQUIRE(charged->size() == 2);
    double total = 0;
    for (const ScheduledCharges& tariff : *charged) {
      for (const EnergyCharge& line : tariff.lines) total += line.amount;
    }
    CHECK(cost == doctest::Approx(total).epsilon(1e-12));
  }
}

}  // namespace
}  // namespace ampledger
