// tests/metering/tariff_test.cpp
#include "daemon/metering/tariff.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

using date::operator""_y;

constexpr unsigned kWeekdays = DayKindBit(DayKind::kWeekday);

// One season all year, "peak" 17:00-21:00 weekdays, "base" otherwise.
TariffRates Simple() {
  return {"simple",
          {{"all year", date::January / 1, date::December / 31,
            {{"peak", 0.30}, {"base", 0.10}},
            {{"peak", 17 * 60, 21 * 60, kWeekdays}}, "base", std::nullopt}},
          {}};
}

std::string Refusal(TariffRates rates) {
  Result<Tariff> tariff = Tariff::Create(std::move(rates));
  REQUIRE_FALSE(tariff.ok());
  CHECK(tariff.status().code() == StatusCode::kInvalidArgument);
  return tariff.status().message();
}

std::string PeriodAt(const Tariff& tariff, date::year_month_day day, int minute) {
  RateSlot slot = tariff.At(day, minute);
  return tariff.rates().seasons[slot.season].prices[slot.period].period;
}

Tariff Make(TariffRates rates) {
  Result<Tariff> tariff = Tariff::Create(std::move(rates));
  REQUIRE_MESSAGE(tariff.ok(), tariff.status().ToString());
  return *tariff;
}

TEST_SUITE("metering") {
  TEST_CASE("window bounds: start inclusive, end exclusive") {
    Tariff tariff = Make(Simple());
    CHECK(PeriodAt(tariff, 2026_y / 3 / 4, 17 * 60 - 1) == "base");  // Wednesday
    CHECK(PeriodAt(tariff, 2026_y / 3 / 4, 17 * 60) == "peak");
    CHECK(PeriodAt(tariff, 2026_y / 3 / 4, 21 * 60 - 1) == "peak");
    CHECK(PeriodAt(tariff, 2026_y / 3 / 4, 21 * 60) == "base");
    CHECK(PeriodAt(tariff, 2026_y / 3 / 7, 18 * 60) == "base");  // Saturday
  }

  TEST_CASE("a window ending at 21:30 on a quarter hour") {
    TariffRates rates = Simple();
    rates.seasons[0].windows[0].end_minute = 21 * 60 + 30;
    Tariff tariff = Make(rates);
    CHECK(PeriodAt(tariff, 2026_y / 3 / 4, 21 * 60 + 15) == "peak");
    CHECK(PeriodAt(tariff, 2026_y / 3 / 4, 21 * 60 + 30) == "base");
  }

  TEST_CASE("a window across midnight takes each calendar day's own day kind") {
    TariffRates rates = Simple();
    rates.seasons[0].windows[0] = {"peak", 19 * 60, 7 * 60, kWeekdays};
    Tariff tariff = Make(rates);
    CHECK(PeriodAt(tariff, 2026_y / 3 / 6, 23 * 60) == "peak");  // Friday evening
    CHECK(PeriodAt(tariff, 2026_y / 3 / 7, 1 * 60) == "base");   // Saturday morning
    CHECK(PeriodAt(tariff, 2026_y / 3 / 8, 23 * 60) == "base");  // Sunday evening
    CHECK(PeriodAt(tariff, 2026_y / 3 / 9, 6 * 60 + 45) == "peak");  // Monday morning
    CHECK(PeriodAt(tariff, 2026_y / 3 / 9, 7 * 60) == "base");
  }

  TEST_CASE("the first matching window wins") {
    TariffRates rates = Simple();
    rates.seasons[0].prices.push_back({"event", 0.90});
    rates.seasons[0].windows.insert(rates.seasons[0].windows.begin(),
                                    {"event", 18 * 60, 19 * 60, kWeekdays});
    Tariff tariff = Make(rates);
    CHECK(PeriodAt(tariff, 2026_y / 3 / 4, 18 * 60 + 30) == "event");
    CHECK(PeriodAt(tariff, 2026_y / 3 / 4, 17 * 60 + 30) == "peak");
  }

  TEST_CASE("a holiday on a weekday is a holiday, not a weekday") {
    TariffRates rates = Simple();
    Result<HolidayCalendar> holidays =
        HolidayCalendar::Create({{"Labour Day", NthWeekday{date::September, date::Monday, 1}}});
    REQUIRE(holidays.ok());
    rates.holidays = holidays->rules();
    Tariff tariff = Make(rates);
    CHECK(tariff.KindOf(2026_y / 9 / 7, 0) == DayKind::kHoliday);
    CHECK(PeriodAt(tariff, 2026_y / 9 / 7, 18 * 60) == "base");
    CHECK(tariff.KindOf(2026_y / 9 / 8, 0) == DayKind::kWeekday);
  }

  TEST_CASE("a season's own holiday list replaces the tariff's") {
    TariffRates rates = Simple();
    rates.seasons[0].last_day = date::June / 30;
    rates.seasons.push_back(rates.seasons[0]);
    rates.seasons[1].name = "second half";
    rates.seasons[1].first_day = date::July / 1;
    rates.seasons[1].last_day = date::December / 31;
    Result<HolidayCalendar> tariff_list =
        HolidayCalendar::Create({{"Midsummer", FixedDate{date::June / 24}},
                                 {"Autumn", FixedDate{date::October / 1}}});
    Result<HolidayCalendar> second_half_list =
        HolidayCalendar::Create({{"Harvest", FixedDate{date::October / 2}}});
    REQUIRE(tariff_list.ok());
    REQUIRE(second_half_list.ok());
    rates.holidays = tariff_list->rules();
    rates.seasons[1].holidays = second_half_list->rules();
    Tariff tariff = Make(rates);
    CHECK(tariff.KindOf(2026_y / 6 / 24, 0) == DayKind::kHoliday);
    CHECK(tariff.KindOf(2026_y / 10 / 1, 1) == DayKind::kWeekday);
    CHECK(tariff.KindOf(2026_y / 10 / 2, 1) == DayKind::kHoliday);
  }

  TEST_CASE("weekend days can be other than Saturday and Sunday") {
    TariffRates rates = Simple();
    rates.weekend_days = {date::Friday, date::Saturday};
    Tariff tariff = Make(rates);
    CHECK(tariff.KindOf(2026_y / 3 / 6, 0) == DayKind::kWeekend);  // Friday
    CHECK(tariff.KindOf(2026_y / 3 / 8, 0) == DayKind::kWeekday);  // Sunday
  }

  TEST_CASE("a season spanning the year end, December to February") {
    TariffRates rates = Simple();
    rates.seasons[0].name = "warm";
    rates.seasons[0].first_day = date::March / 1;
    rates.seasons[0].last_day = date::November / 30;
    rates.seasons.push_back(rates.seasons[0]);
    rates.seasons[1].name = "cold";
    rates.seasons[1].first_day = date::December / 1;
    rates.seasons[1].last_day = date::February / 29;
    Tariff tariff = Make(rates);
    CHECK(tariff.At(2026_y / 12 / 1, 0).season == 1);
    CHECK(tariff.At(2027_y / 1 / 15, 0).season == 1);
    CHECK(tariff.At(2028_y / 2 / 29, 0).season == 1);
    CHECK(tariff.At(2027_y / 3 / 1, 0).season == 0);
    CHECK(tariff.At(2026_y / 11 / 30, 0).season == 0);
  }

  TEST_CASE("seasons must cover every day once, 29 February included") {
    TariffRates gap = Simple();
    gap.seasons[0].first_day = date::March / 1;
    gap.seasons[0].last_day = date::February / 28;
    CHECK(Refusal(gap) == "02-29 is in no season");

    TariffRates overlap = Simple();
    overlap.seasons.push_back(overlap.seasons[0]);
    overlap.seasons[1].name = "summer";
    overlap.seasons[1].first_day = date::June / 1;
    overlap.seasons[1].last_day = date::August / 31;
    CHECK(Refusal(overlap) == "06-01 is in seasons \"all year\" and \"summer\"");

    CHECK(Refusal({"none", {}, {}}) == "no season");
  }

  TEST_CASE("bad windows and prices are refused with season and window named") {
    TariffRates off_quarter = Simple();
    off_quarter.seasons[0].windows[0].start_minute = 7 * 60 + 10;
    CHECK(Refusal(off_quarter) == "season \"all year\": window 1: start 07:10 is not on a "
                                  "quarter hour");

    TariffRates out_of_day = Simple();
    out_of_day.seasons[0].windows[0].end_minute = 1455;
    CHECK(Refusal(out_of_day) == "season \"all year\": window 1: end 1455 is not a time of day "
                                 "in minutes (0..1440)");

    TariffRates empty = Simple();
    empty.seasons[0].windows[0].end_minute = 17 * 60;
    CHECK(Refusal(empty) == "season \"all year\": window 1: start and end are the same time; "
                            "write 00:00 to 24:00 for the whole day");

    TariffRates unpriced = Simple();
    unpriced.seasons[0].windows[0].period = "critical";
    CHECK(Refusal(unpriced) == "season \"all year\": window 1: period \"critical\" has no price");

    TariffRates no_days = Simple();
    no_days.seasons[0].windows[0].day_kinds = 0;
    CHECK(Refusal(no_days) == "season \"all year\": window 1: names no day kind");

    TariffRates twice = Simple();
    twice.seasons[0].prices.push_back({"peak", 0.5});
    CHECK(Refusal(twice) == "season \"all year\": period \"peak\" is priced twice");

    TariffRates no_default = Simple();
    no_default.seasons[0].default_period = "rest";
    CHECK(Refusal(no_default) == "season \"all year\": default period \"rest\" has no price");
  }

  TEST_CASE("pricing buckets: lines per period, and a misaligned bucket is refused") {
    Tariff tariff = Make(Simple());
    Result<LocalTime> utc = LocalTime::ForZone("UTC");
    REQUIRE(utc.ok());
    // Wednesday 2026-03-04: 16:45 (base), 17:00 and 20:45 (peak), 21:00 (base).
    UnixMs day = date::sys_days{2026_y / 3 / 4}.time_since_epoch().count() * 86'400'000LL;
    auto at = [&](int minute) { return day + minute * 60'000LL; };
    std::vector<BucketEnergy> buckets = {{at(16 * 60 + 45), 0.5},
                                         {at(17 * 60), 1.0},
                                         {at(20 * 60 + 45), 1.5},
                                         {at(21 * 60), 2.0}};
    Result<std::vector<EnergyCharge>> lines = tariff.PriceEnergy(*utc, buckets);
    REQUIRE(lines.ok());
    REQUIRE(lines->size() == 2);
    CHECK((*lines)[0].period == "peak");
    CHECK((*lines)[0].season == "all year");
    CHECK((*lines)[0].kwh == doctest::Approx(2.5));
    CHECK((*lines)[0].per_kwh == 0.30);
    CHECK((*lines)[0].amount == doctest::Approx(0.75));
    CHECK((*lines)[1].period == "base");
    CHECK((*lines)[1].kwh == doctest::Approx(2.5));

    CHECK(tariff.PriceEnergy(*utc, {}).value().empty());
    std::vector<BucketEnergy> misaligned = {{at(17 * 60) + 60'000, 1.0}};
    CHECK(tariff.PriceEnergy(*utc, misaligned).status().code() == StatusCode::kInvalidArgument);
  }
}

}  // namespace
}  // namespace ampledger
