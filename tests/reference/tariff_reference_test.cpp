// tests/reference/tariff_reference_test.cpp
// Time-of-use pricing checked against tests/reference/data/tariffs/WORKED-EXAMPLES.md: its
// published period definitions [PUB] and its hand-computed totals [HAND] (hand computations
// from published rates, not published bills), and local days from tests/reference/data/tz.
#include <doctest/doctest.h>

#include <cstdio>
#include <sstream>
#include <string>
#include <vector>

#include "daemon/metering/tariff.h"
#include "test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;

constexpr unsigned kWeekdays = DayKindBit(DayKind::kWeekday);
constexpr unsigned kWeekendsAndHolidays =
    DayKindBit(DayKind::kWeekend) | DayKindBit(DayKind::kHoliday);

Tariff Make(TariffRates rates) {
  Result<Tariff> tariff = Tariff::Create(std::move(rates));
  REQUIRE_MESSAGE(tariff.ok(), tariff.status().ToString());
  return *tariff;
}

LocalTime Zone(const std::string& name) {
  Result<LocalTime> zone = LocalTime::ForZone(name);
  REQUIRE(zone.ok());
  return *zone;
}

// A constant `kw` load over local days [first, first + days), as 15-minute buckets.
std::vector<BucketEnergy> ConstantLoad(const LocalTime& zone, date::year_month_day first,
                                       int days, double kw) {
  std::vector<BucketEnergy> buckets;
  for (int k = 0; k < days; ++k) {
    Result<std::vector<UnixMs>> starts =
        zone.DayBuckets(date::year_month_day{date::sys_days{first} + date::days{k}});
    REQUIRE(starts.ok());
    for (UnixMs start : *starts) buckets.push_back({start, kw / 4});
  }
  return buckets;
}

double Total(const std::vector<EnergyCharge>& lines) {
  double total = 0;
  for (const EnergyCharge& line : lines) total += line.amount;
  return total;
}

double KwhOf(const std::vector<EnergyCharge>& lines, const std::string& period) {
  double kwh = 0;
  for (const EnergyCharge& line : lines) {
    if (line.period == period) kwh += line.kwh;
  }
  return kwh;
}

// WORKED-EXAMPLES.md 2.1, Ontario Energy Board RPP TOU from 1 Nov 2025 [PUB]: winter
// (1 Nov - 30 Apr) off-peak 9.8 c weekdays 19-07 and all day weekends and holidays, mid-peak
// 15.7 c weekdays 11-17, on-peak 20.3 c weekdays 7-11 and 17-19; summer (1 May - 31 Oct) swaps
// mid and on. Summer is priced here at the winter prices: only the periods were published.
// Holidays: the Ontario TOU list of the same section, weekend dates moved to the next Monday;
// Victoria Day (Monday before 25 May) and Civic Holiday (first Monday of August) from memory.
Tariff Ontario() {
  const ObservedRule kMonday = ObservedRule::kNextMonday;
  Result<HolidayCalendar> holidays = HolidayCalendar::Create({
      {"New Year's Day", FixedDate{date::January / 1}, kMonday},
      {"Family Day", NthWeekday{date::February, date::Monday, 3}},
      {"Good Friday", EasterRelative{-2}},
      {"Victoria Day", WeekdayOnOrBefore{date::May / 24, date::Monday}},
      {"Canada Day", FixedDate{date::July / 1}, kMonday},
      {"Civic Holiday", NthWeekday{date::August, date::Monday, 1}},
      {"Labour Day", NthWeekday{date::September, date::Monday, 1}},
      {"Thanksgiving", NthWeekday{date::October, date::Monday, 2}},
      {"Christmas Day", FixedDate{date::December / 25}, kMonday},
      {"Boxing Day", FixedDate{date::December / 26}, kMonday},
  });
  REQUIRE(holidays.ok());
  std::vector<PeriodPrice> prices = {{"on-peak", 0.203}, {"mid-peak", 0.157}, {"off-peak", 0.098}};
  Season winter{"winter", date::November / 1, date::April / 30, prices,
                {{"on-peak", 7 * 60, 11 * 60, kWeekdays},
                 {"mid-peak", 11 * 60, 17 * 60, kWeekdays},
                 {"on-peak", 17 * 60, 19 * 60, kWeekdays}},
                "off-peak", std::nullopt};
  Season summer{"summer", date::May / 1, date::October / 31, prices,
                {{"mid-peak", 7 * 60, 11 * 60, kWeekdays},
                 {"on-peak", 11 * 60, 17 * 60, kWeekdays},
                 {"mid-peak", 17 * 60, 19 * 60, kWeekdays}},
                "off-peak", std::nullopt};
  return Make({"ontario-rpp-tou", {winter, summer}, holidays->rules()});
}

TEST_SUITE("reference") {
  // [HAND] WORKED-EXAMPLES.md 2.1: constant 1 kW for one ordinary Mon-Sun week: on 30 h,
  // mid 30 h, off 108 h -> $21.384. The week of Monday 12 January 2026, Toronto.
  TEST_CASE("Ontario TOU: an ordinary winter week at 1 kW costs $21.384") {
    Tariff tariff = Ontario();
    LocalTime toronto = Zone("America/Toronto");
    std::vector<BucketEnergy> load = ConstantLoad(toronto, 2026_y / 1 / 12, 7, 1.0);
    Result<std::vector<EnergyCharge>> lines = tariff.PriceEnergy(toronto, load);
    REQUIRE(lines.ok());
    REQUIRE(lines->size() == 3);
    CHECK((*lines)[0].period == "on-peak");
    CHECK((*lines)[0].kwh == doctest::Approx(30));
    CHECK((*lines)[1].period == "mid-peak");
    CHECK((*lines)[1].kwh == doctest::Approx(30));
    CHECK((*lines)[2].period == "off-peak");
    CHECK((*lines)[2].kwh == doctest::Approx(108));
    CHECK(Total(*lines) == doctest::Approx(21.384).epsilon(1e-12));
  }

  // [HAND] WORKED-EXAMPLES.md 2.1: constant 1 kW Mon 22 - Sun 28 Dec 2025, Thursday 25
  // (Christmas) and Friday 26 (Boxing Day) holidays: on 18 h, mid 18 h, off 132 h -> $19.416.
  TEST_CASE("Ontario TOU: the Christmas week of 2025 at 1 kW costs $19.416") {
    Tariff tariff = Ontario();
    LocalTime toronto = Zone("America/Toronto");
    CHECK(tariff.KindOf(2025_y / 12 / 25, 0) == DayKind::kHoliday);
    CHECK(tariff.KindOf(2025_y / 12 / 26, 0) == DayKind::kHoliday);
    std::vector<BucketEnergy> load = ConstantLoad(toronto, 2025_y / 12 / 22, 7, 1.0);
    Result<std::vector<EnergyCharge>> lines = tariff.PriceEnergy(toronto, load);
    REQUIRE(lines.ok());
    CHECK(KwhOf(*lines, "on-peak") == doctest::Approx(18));
    CHECK(KwhOf(*lines, "mid-peak") == doctest::Approx(18));
    CHECK(KwhOf(*lines, "off-peak") == doctest::Approx(132));
    CHECK(Total(*lines) == doctest::Approx(19.416).epsilon(1e-12));
  }

  // [PUB] WORKED-EXAMPLES.md 2.1: in summer (1 May - 31 Oct) mid and on swap.
  TEST_CASE("Ontario TOU: summer swaps mid-peak and on-peak") {
    Tariff tariff = Ontario();
    auto period = [&](date::year_month_day day, int hour) {
      RateSlot slot = tariff.At(day, hour * 60);
      return tariff.rates().seasons[slot.season].prices[slot.period].period;
    };
    CHECK(period(2026_y / 7 / 15, 12) == "on-peak");   // Wednesday
    CHECK(period(2026_y / 7 / 15, 8) == "mid-peak");
    CHECK(period(2026_y / 1 / 14, 12) == "mid-peak");  // Wednesday
    CHECK(period(2026_y / 1 / 14, 8) == "on-peak");
    CHECK(period(2026_y / 5 / 18, 12) == "off-peak");  // Victoria Day
    CHECK(period(2026_y / 4 / 30, 8) == "on-peak");    // last day of winter
    CHECK(period(2026_y / 5 / 1, 8) == "mid-peak");    // first day of summer
  }

  // [PUB] WORKED-EXAMPLES.md 2.5, SDG&E residential TOU periods (no prices: placeholders of 0
  // are never summed here): summer 1 Jun - 31 Oct, winter 1 Nov - 31 May; on-peak 16-21 every
  // day; weekday super-off-peak 00-06 plus 10-14 in March and April only; weekend and holiday
  // super-off-peak 00-14; off-peak the rest.
  TEST_CASE("SDG&E TOU periods: a window that exists only in March and April") {
    std::vector<PeriodPrice> prices = {{"on-peak", 0}, {"super-off-peak", 0}, {"off-peak", 0}};
    std::vector<RateWindow> windows = {
        {"on-peak", 16 * 60, 21 * 60},
        {"super-off-peak", 0, 6 * 60, kWeekdays},
        {"super-off-peak", 10 * 60, 14 * 60, kWeekdays,
         MonthBit(date::March) | MonthBit(date::April)},
        {"super-off-peak", 0, 14 * 60, kWeekendsAndHolidays},
    };
    Tariff tariff = Make({"sdge-tou",
                          {{"summer", date::June / 1, date::October / 31, prices, windows,
                            "off-peak", std::nullopt},
                           {"winter", date::November / 1, date::May / 31, prices, windows,
                            "off-peak", std::nullopt}},
                          {}});
    auto period = [&](date::year_month_day day, int minute) {
      RateSlot slot = tariff.At(day, minute);
      return tariff.rates().seasons[slot.season].prices[slot.period].period;
    };
    CHECK(period(2026_y / 3 / 10, 11 * 60) == "super-off-peak");  // Tuesday in March
    CHECK(period(2026_y / 4 / 30, 13 * 60 + 45) == "super-off-peak");
    CHECK(period(2026_y / 4 / 30, 14 * 60) == "off-peak");
    CHECK(period(2026_y / 5 / 12, 11 * 60) == "off-peak");  // Tuesday in May
    CHECK(period(2026_y / 5 / 12, 5 * 60) == "super-off-peak");
    CHECK(period(2026_y / 5 / 16, 13 * 60) == "super-off-peak");  // Saturday
    CHECK(period(2026_y / 5 / 16, 15 * 60) == "off-peak");
    CHECK(period(2026_y / 12 / 31, 17 * 60) == "on-peak");
    CHECK(tariff.At(2026_y / 12 / 31, 0).season == 1);  // winter spans the year end
    CHECK(tariff.At(2027_y / 1 / 1, 0).season == 1);
    CHECK(tariff.At(2026_y / 6 / 1, 0).season == 0);
  }

  // [PUB] WORKED-EXAMPLES.md 2.5, MidAmerican Energy (Illinois) Rate RST: on-peak June-Sept
  // Mon-Fri 13-18 excluding Independence Day and Labor Day; off-peak every day 22-08 (a window
  // across midnight); shoulder all other hours. Independence Day is taken on its date (the
  // source does not say how a weekend date is observed).
  TEST_CASE("MidAmerican RST periods: on-peak excludes two holidays, off-peak crosses midnight") {
    Result<HolidayCalendar> holidays = HolidayCalendar::Create({
        {"Independence Day", FixedDate{date::July / 4}},
        {"Labor Day", NthWeekday{date::September, date::Monday, 1}},
    });
    REQUIRE(holidays.ok());
    std::vector<PeriodPrice> prices = {{"on-peak", 0}, {"off-peak", 0}, {"shoulder", 0}};
    Tariff tariff = Make({"midamerican-rst",
                          {{"summer", date::June / 1, date::September / 30, prices,
                            {{"off-peak", 22 * 60, 8 * 60},
                             {"on-peak", 13 * 60, 18 * 60, kWeekdays}},
                            "shoulder", std::nullopt},
                           {"other", date::October / 1, date::May / 31, prices,
                            {{"off-peak", 22 * 60, 8 * 60}}, "shoulder", std::nullopt}},
                          holidays->rules()});
    auto period = [&](date::year_month_day day, int hour) {
      RateSlot slot = tariff.At(day, hour * 60);
      return tariff.rates().seasons[slot.season].prices[slot.period].period;
    };
    CHECK(period(2025_y / 7 / 3, 14) == "on-peak");    // Thursday
    CHECK(period(2025_y / 7 / 4, 14) == "shoulder");   // Friday, Independence Day
    CHECK(period(2026_y / 9 / 7, 14) == "shoulder");   // Labor Day
    CHECK(period(2026_y / 9 / 8, 14) == "on-peak");
    CHECK(period(2026_y / 9 / 8, 23) == "off-peak");
    CHECK(period(2026_y / 9 / 9, 7) == "off-peak");
    CHECK(period(2026_y / 10 / 6, 14) == "shoulder");  // Tuesday in October
  }

  // Source: tests/reference/data/tz/local-day-hours-2026.csv (tzdata 2025b via zdump): every
  // DST day of 2026 and two ordinary Phoenix days. A constant 1 kW over the local day gives as
  // many kWh as the day has hours. [HAND] With "night" 00:00-06:00 and "day" the rest, every
  // clock change in the file happens between 01:00 and 03:00 local, so the night holds
  // hours - 18 kWh (5 on a 23-hour day, 7 on a 25-hour day) and the day always 18.
  TEST_CASE("DST days of 2026: 23, 24 or 25 kWh at 1 kW, each hour in the right period") {
    std::vector<PeriodPrice> prices = {{"night", 0.10}, {"day", 0.20}};
    Tariff tariff = Make({"night-and-day",
                          {{"all year", date::January / 1, date::December / 31, prices,
                            {{"night", 0, 6 * 60}}, "day", std::nullopt}},
                          {}});
    std::istringstream csv(
        testing::ReadFile(testing::ReferenceDir() / "tz" / "local-day-hours-2026.csv"));
    std::string line;
    std::getline(csv, line);  // header
    int rows = 0;
    while (std::getline(csv, line)) {
      if (line.empty()) continue;
      ++rows;
      std::string zone_name = line.substr(0, line.find(','));
      CAPTURE(line);
      int y = 0;
      unsigned m = 0, d = 0;
      int hours = 0;
      char kind[16];
      REQUIRE(std::sscanf(line.c_str() + zone_name.size() + 1, "%d-%u-%u,%15[^,],%d", &y, &m,
                          &d, kind, &hours) == 5);
      LocalTime zone = Zone(zone_name);
      std::vector<BucketEnergy> load =
          ConstantLoad(zone, date::year{y} / date::month{m} / date::day{d}, 1, 1.0);
      Result<std::vector<EnergyCharge>> lines = tariff.PriceEnergy(zone, load);
      REQUIRE(lines.ok());
      CHECK(KwhOf(*lines, "night") + KwhOf(*lines, "day") == doctest::Approx(hours));
      CHECK(KwhOf(*lines, "night") == doctest::Approx(hours - 18));
      CHECK(KwhOf(*lines, "day") == doctest::Approx(18));
    }
    CHECK(rows == 12);
  }
}

}  // namespace
}  // namespace ampledger
