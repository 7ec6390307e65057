// tests/metering/holiday_test.cpp
#include "daemon/metering/holiday.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

using date::operator""_y;

HolidayCalendar Calendar(std::vector<HolidayRule> rules) {
  Result<HolidayCalendar> calendar = HolidayCalendar::Create(std::move(rules));
  REQUIRE(calendar.ok());
  return *calendar;
}

TEST_SUITE("metering") {
  TEST_CASE("a fifth weekday that a month lacks yields no holiday that year") {
    HolidayCalendar calendar = Calendar({{"fifth Friday", NthWeekday{date::May, date::Friday, 5}}});
    CHECK(calendar.ObservedIn(2026_y).size() == 1);  // May 2026 has five Fridays (29th)
    CHECK(calendar.IsHoliday(2026_y / 5 / 29));
    CHECK(calendar.ObservedIn(2027_y).empty());  // May 2027 has four
  }

  TEST_CASE("a weekday on or before a date, the date itself included") {
    // Monday on or before 24 May: 2026-05-18; in 2027 the 24th is itself a Monday.
    HolidayCalendar calendar =
        Calendar({{"spring Monday", WeekdayOnOrBefore{date::May / 24, date::Monday}}});
    CHECK(calendar.IsHoliday(2026_y / 5 / 18));
    CHECK(calendar.IsHoliday(2027_y / 5 / 24));
  }

  TEST_CASE("Easter-relative dates") {
    HolidayCalendar calendar = Calendar({{"Good Friday", EasterRelative{-2}},
                                         {"Easter Monday", EasterRelative{1}}});
    std::vector<ObservedHoliday> observed = calendar.ObservedIn(2026_y);
    REQUIRE(observed.size() == 2);
    CHECK(observed[0].observed == 2026_y / 4 / 3);
    CHECK(observed[1].observed == 2026_y / 4 / 6);
  }

  TEST_CASE("observed: a Saturday holiday kept on its day with kSameDay") {
    HolidayCalendar calendar = Calendar({{"July 4", FixedDate{date::July / 4}}});
    CHECK(calendar.IsHoliday(2026_y / 7 / 4));
    CHECK_FALSE(calendar.IsHoliday(2026_y / 7 / 3));
  }

  TEST_CASE("observed: a Saturday holiday moved to Friday crosses into the previous year") {
    HolidayCalendar calendar =
        Calendar({{"New Year", FixedDate{date::January / 1}, ObservedRule::kFridayOrMonday}});
    std::vector<ObservedHoliday> in_2027 = calendar.ObservedIn(2027_y);
    REQUIRE(in_2027.size() == 2);  // 2027-01-01 (Friday) and 2028-01-01 observed 2027-12-31
    CHECK(in_2027[1].date == 2028_y / 1 / 1);
    CHECK(in_2027[1].observed == 2027_y / 12 / 31);
    CHECK(calendar.ObservedIn(2028_y).empty());
  }

  TEST_CASE("observed: next Monday, and the next free weekday when Monday is taken") {
    // From memory (Canadian statutory practice, not from the reference data): when Christmas
    // falls on a Saturday it is observed on Monday the 27th and Boxing Day on Tuesday the 28th;
    // when it falls on a Sunday, on Tuesday the 27th after Boxing Day on Monday.
    HolidayCalendar calendar = Calendar({
        {"Christmas Day", FixedDate{date::December / 25}, ObservedRule::kNextMonday},
        {"Boxing Day", FixedDate{date::December / 26}, ObservedRule::kNextMonday},
    });
    std::vector<ObservedHoliday> observed = calendar.ObservedIn(2021_y);
    REQUIRE(observed.size() == 2);
    CHECK(observed[0].observed == 2021_y / 12 / 27);
    CHECK(observed[1].observed == 2021_y / 12 / 28);
    // 2022: Boxing Day is itself Monday the 26th, so Christmas (a Sunday) goes to Tuesday.
    std::vector<ObservedHoliday> in_2022 = calendar.ObservedIn(2022_y);
    REQUIRE(in_2022.size() == 2);
    CHECK(in_2022[0].name == "Boxing Day");
    CHECK(in_2022[0].observed == 2022_y / 12 / 26);
    CHECK(in_2022[1].name == "Christmas Day");
    CHECK(in_2022[1].observed == 2022_y / 12 / 27);
  }

  TEST_CASE("bad rules are refused with the holiday named") {
    Result<HolidayCalendar> bad = HolidayCalendar::Create(
        {{"ok", FixedDate{date::January / 1}}, {"sixth", NthWeekday{date::May, date::Monday, 6}}});
    REQUIRE_FALSE(bad.ok());
    CHECK(bad.status().message() == "holiday 2 (\"sixth\"): n must be 1..5");
    Result<HolidayCalendar> feb30 =
        HolidayCalendar::Create({{"Feb 30", FixedDate{date::February / 30}}});
    CHECK(feb30.status().message() == "holiday 1 (\"Feb 30\"): not a valid month and day");
  }
}

}  // namespace
}  // namespace ampledger
