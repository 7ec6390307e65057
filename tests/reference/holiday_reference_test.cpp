// tests/reference/holiday_reference_test.cpp
// Holiday rules checked against published holiday dates, each source named beside its check.
#include <doctest/doctest.h>

#include <cstdio>
#include <sstream>
#include <string>
#include <vector>

#include "daemon/metering/holiday.h"
#include "test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;

date::year_month_day ParseDate(const std::string& text) {
  int y = 0;
  unsigned m = 0, d = 0;
  REQUIRE(std::sscanf(text.c_str(), "%d-%u-%u", &y, &m, &d) == 3);
  return date::year{y} / date::month{m} / date::day{d};
}

// The legal public holidays of 5 U.S.C. 6103(a), observed per 6103(b)(1) (Saturday -> Friday)
// and Executive Order 11582 sec. 3(a) (Sunday -> Monday), written as tariff rules.
HolidayCalendar UsFederal() {
  const ObservedRule kMoves = ObservedRule::kFridayOrMonday;
  std::vector<HolidayRule> rules = {
      {"New Year's Day", FixedDate{date::January / 1}, kMoves},
      {"Birthday of Martin Luther King, Jr.", NthWeekday{date::January, date::Monday, 3}},
      {"Washington's Birthday", NthWeekday{date::February, date::Monday, 3}},
      {"Memorial Day", LastWeekday{date::May, date::Monday}},
      {"Juneteenth National Independence Day", FixedDate{date::June / 19}, kMoves},
      {"Independence Day", FixedDate{date::July / 4}, kMoves},
      {"Labor Day", NthWeekday{date::September, date::Monday, 1}},
      {"Columbus Day", NthWeekday{date::October, date::Monday, 2}},
      {"Veterans Day", FixedDate{date::November / 11}, kMoves},
      {"Thanksgiving Day", NthWeekday{date::November, date::Thursday, 4}},
      {"Christmas Day", FixedDate{date::December / 25}, kMoves},
  };
  Result<HolidayCalendar> calendar = HolidayCalendar::Create(std::move(rules));
  REQUIRE(calendar.ok());
  return *calendar;
}

TEST_SUITE("reference") {
  // Source: tests/reference/data/holidays/us-federal-2025-2027.csv (5 U.S.C. 6103 and
  // EO 11582; dates derived from the statute and cross-checked against copies of the OPM
  // tables, see its SOURCES.md). The rules give exactly its observed dates for 2025-2027,
  // New Year's Day 2028 included (observed Friday 2027-12-31), and no other.
  TEST_CASE("US federal holidays 2025-2027: observed dates equal the published list") {
    std::istringstream csv(testing::ReadFile(testing::ReferenceDir() / "holidays" /
                                             "us-federal-2025-2027.csv"));
    std::vector<std::pair<date::year_month_day, date::year_month_day>> expected;
    std::string line;
    std::getline(csv, line);  // header
    while (std::getline(csv, line)) {
      if (line.empty()) continue;
      expected.emplace_back(ParseDate(line.substr(0, 10)), ParseDate(line.substr(11, 10)));
    }
    REQUIRE(expected.size() == 34);

    HolidayCalendar calendar = UsFederal();
    std::vector<std::pair<date::year_month_day, date::year_month_day>> computed;
    for (date::year year = 2025_y; year <= 2027_y; ++year) {
      for (const ObservedHoliday& holiday : calendar.ObservedIn(year)) {
        computed.emplace_back(holiday.date, holiday.observed);
        CHECK(calendar.IsHoliday(holiday.observed));
      }
    }
    CHECK(computed == expected);
    CHECK_FALSE(calendar.IsHoliday(2026_y / 7 / 4));  // a Saturday, observed on the Friday
  }

  // Source: tests/reference/data/holidays/us-federal-executive-closures-2025-2027.csv: the
  // one-off closures are explicit dates, not rules; they are holidays only when listed.
  TEST_CASE("US executive closures of 2025 as explicit dates") {
    std::vector<HolidayRule> rules = {
        {"executive closures",
         ExplicitDates{{2025_y / 1 / 9, 2025_y / 12 / 24, 2025_y / 12 / 26}}}};
    Result<HolidayCalendar> calendar = HolidayCalendar::Create(std::move(rules));
    REQUIRE(calendar.ok());
    CHECK(calendar->ObservedIn(2025_y).size() == 3);
    CHECK(calendar->IsHoliday(2025_y / 12 / 24));
    CHECK_FALSE(calendar->IsHoliday(2025_y / 12 / 25));
    CHECK(calendar->ObservedIn(2026_y).empty());
  }

  // Source: the python-dateutil 2.9.0 library's easter() (EASTER_WESTERN) on this machine, a
  // general-purpose reference library, for 2020-2030; plus the two extremes of the Gregorian
  // Easter cycle from memory (22 March 2285, 25 April 2038), which dateutil also gives.
  TEST_CASE("Easter Sunday matches python-dateutil") {
    const char* dateutil[] = {"2020-04-12", "2021-04-04", "2022-04-17", "2023-04-09",
                              "2024-03-31", "2025-04-20", "2026-04-05", "2027-03-28",
                              "2028-04-16", "2029-04-01", "2030-04-21"};
    int year = 2020;
    for (const char* expected : dateutil) {
      CAPTURE(year);
      CHECK(EasterSunday(date::year{year++}) == ParseDate(expected));
    }
    CHECK(EasterSunday(2285_y) == 2285_y / 3 / 22);
    CHECK(EasterSunday(2038_y) == 2038_y / 4 / 25);
  }

  // Source: tests/reference/data/tariffs/WORKED-EXAMPLES.md section 2.1, "Ontario TOU
  // holidays" (Bluewater Power 2017 list): weekend holidays move to the following Monday,
  // e.g. New Year's Day 2017 observed Monday 2 January, Canada Day (Saturday 1 July 2017)
  // observed Monday 3 July.
  TEST_CASE("Ontario TOU holidays 2017: weekend holidays observed the following Monday") {
    const ObservedRule kMonday = ObservedRule::kNextMonday;
    std::vector<HolidayRule> rules = {
        {"New Year's Day", FixedDate{date::January / 1}, kMonday},
        {"Canada Day", FixedDate{date::July / 1}, kMonday},
    };
    Result<HolidayCalendar> calendar = HolidayCalendar::Create(std::move(rules));
    REQUIRE(calendar.ok());
    std::vector<ObservedHoliday> observed = calendar->ObservedIn(2017_y);
    REQUIRE(observed.size() == 2);
    CHECK(observed[0].observed == 2017_y / 1 / 2);
    CHECK(observed[1].observed == 2017_y / 7 / 3);
  }
}

}  // namespace
}  // namespace ampledger
