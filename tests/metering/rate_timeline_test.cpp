// tests/metering/rate_timeline_test.cpp
// The quoted price per kWh (period price, adders, first tier block) and the rate timeline:
// merged intervals, the next change, a tariff change at local midnight, and a flat tariff
// that never changes. Hand-computed expectations; UTC keeps the arithmetic plain.
#include "daemon/metering/rate_timeline.h"

#include <doctest/doctest.h>

#include "metering/bill_test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;

UnixMs Utc(date::year_month_day day, int hour = 0, int minute = 0) {
  return ((date::sys_days{day}.time_since_epoch().count() * 24 + hour) * 60 + minute) * 60'000LL;
}

// Peak 0.30 from 17:00 to 20:00 every day, 0.12 otherwise.
TariffConfig TwoPeriods(double peak) {
  TariffConfig tariff;
  Season season;
  season.name = "all year";
  season.first_day = date::January / 1;
  season.last_day = date::December / 31;
  season.prices = {{"peak", peak}, {"standard", 0.12}};
  season.windows = {{"peak", 17 * 60, 20 * 60}};
  season.default_period = "standard";
  tariff.rates.name = "Two periods";
  tariff.rates.seasons = {season};
  return tariff;
}

Config Site(const TariffConfig& first, const TariffConfig& second) {
  Config config;
  config.site.time_zone = "UTC";
  config.site.tariff = "first";
  config.site.tariff_changes = {{2026_y / 7 / 1, "second"}};
  config.tariffs = {{"first", "/lib/first.toml", first}, {"second", "/lib/second.toml", second}};
  return config;
}

TEST_SUITE("metering") {
  TEST_CASE("QuotedPricePerKwh adds per-kWh adders and the season's first tier block") {
    TariffConfig config = TwoPeriods(0.30);
    config.adders = {{"Delivery", 0.0215}, {"Rider", 0.004}};
    config.tiers = {{"all year", {{300, 0.011}, {0, 0.035}}}};
    Result<Tariff> tariff = Tariff::Create(config);
    REQUIRE(tariff.ok());
    // 0.30 + 0.0215 + 0.004 + 0.011 = 0.3365; 0.12 + ... = 0.1565.
    CHECK(QuotedPricePerKwh(*tariff, RateSlot{0, 0}) == 336'500);
    CHECK(QuotedPricePerKwh(*tariff, RateSlot{0, 1}) == 156'500);
  }

  TEST_CASE("RateIntervals merges quarter hours of the same rate; a tariff change splits them") {
    const LocalTime utc = LocalTime::ForZone("UTC").value();
    Result<TariffSchedule> schedule = TariffSchedule::Create(Site(TwoPeriods(0.30), TwoPeriods(0.35)));
    REQUIRE(schedule.ok());
    Result<std::vector<RateInterval>> day = RateIntervals(
        *schedule, utc, {Utc(2026_y / 6 / 30, 12), Utc(2026_y / 7 / 1, 18)});
    REQUIRE(day.ok());
    REQUIRE(day->size() == 5);
    CHECK((*day)[0].range == TimeRange{Utc(2026_y / 6 / 30, 12), Utc(2026_y / 6 / 30, 17)});
    CHECK((*day)[1].period == "peak");
    CHECK((*day)[1].price_per_kwh == 300'000);
    CHECK((*day)[2].range == TimeRange{Utc(2026_y / 6 / 30, 20), Utc(2026_y / 7 / 1)});
    // Same period and price after midnight, but another tariff: a new interval.
    CHECK((*day)[3].tariff->name == "second");
    CHECK((*day)[3].range == TimeRange{Utc(2026_y / 7 / 1), Utc(2026_y / 7 / 1, 17)});
    CHECK((*day)[4].price_per_kwh == 350'000);
    CHECK((*day)[4].range.end_ms == Utc(2026_y / 7 / 1, 18));
    CHECK_FALSE(RateIntervals(*schedule, utc, {Utc(2026_y / 6 / 30, 12, 5), Utc(2026_y / 7 / 1)})
                    .ok());
    CHECK_FALSE(RateIntervals(*schedule, utc, {Utc(2026_y / 7 / 1), Utc(2026_y / 7 / 1)}).ok());
  }

  TEST_CASE("RateAt: the change after an instant, or none within the horizon") {
    const LocalTime utc = LocalTime::ForZone("UTC").value();
    Result<TariffSchedule> schedule = TariffSchedule::Create(Site(TwoPeriods(0.30), TwoPeriods(0.35)));
    REQUIRE(schedule.ok());
    RateNow now = RateAt(*schedule, utc, Utc(2026_y / 6 / 30, 18, 7), 86'400'000);
    CHECK(now.current.period == "peak");
    CHECK(now.current.range == TimeRange{Utc(2026_y / 6 / 30, 18), Utc(2026_y / 6 / 30, 20)});
    REQUIRE(now.next.has_value());
    CHECK(now.next->period == "standard");
    CHECK(now.next->tariff->name == "first");

    // One price all day and all year: nothing changes.
    TariffConfig flat;
    flat.rates = testing::FlatRates(0.2);
    Result<TariffSchedule> one = TariffSchedule::Create(Site(flat, flat));
    REQUIRE(one.ok());
    RateNow still = RateAt(*one, utc, Utc(2026_y / 7 / 2, 9), 366LL * 86'400'000);
    CHECK(still.current.range.end_ms == 0);
    CHECK_FALSE(still.next.has_value());
    // Before the change to an identically priced tariff, the change itself is the next rate.
    RateNow before = RateAt(*one, utc, Utc(2026_y / 6 / 30, 9), 366LL * 86'400'000);
    CHECK(before.current.range.end_ms == Utc(2026_y / 7 / 1));
    CHECK(before.next->tariff->name == "second");
  }
}

}  // namespace
}  // namespace ampledger
