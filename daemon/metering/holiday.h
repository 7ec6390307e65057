// daemon/metering/holiday.h
// Holiday rules as tariffs state them, and the calendar of observed holidays they produce.
// A rule names the statutory date (a fixed date, the nth or last weekday of a month, a weekday
// on or before a date, a day relative to Easter, or an explicit list) and how a date that falls
// on a weekend is observed. HolidayCalendar is immutable after Create(); any thread may call
// it. Pure: no I/O; the TOML tariff parser in config/ fills HolidayRule.
#pragma once

#include <string>
#include <variant>
#include <vector>

#include <date/date.h>

#include "config/status.h"

namespace ampledger {

// January 1, July 4.
struct FixedDate {
  date::month_day month_day;
};

// The `n`th (1..5) `weekday` of `month`: the third Monday in January. In a year without a
// fifth such weekday the rule yields no date.
struct NthWeekday {
  date::month month;
  date::weekday weekday;
  unsigned n = 1;
};

// The last `weekday` of `month`: the last Monday in May.
struct LastWeekday {
  date::month month;
  date::weekday weekday;
};

// The last `weekday` on or before `month_day`: the Monday on or before May 24.
struct WeekdayOnOrBefore {
  date::month_day month_day;
  date::weekday weekday;
};

// Western (Gregorian) Easter Sunday plus `offset_days`: Good Friday is -2, Easter Monday +1.
struct EasterRelative {
  int offset_days = 0;
};

// Dates given one by one (a one-off closure, a utility's published list).
struct ExplicitDates {
  std::vector<date::year_month_day> dates;
};

using HolidayDateRule =
    std::variant<FixedDate, NthWeekday, LastWeekday, WeekdayOnOrBefore, EasterRelative,
                 ExplicitDates>;

// How a holiday whose date falls on a Saturday or Sunday is observed.
enum class ObservedRule {
  kSameDay,        // on its date, weekend or not
  kFridayOrMonday, // Saturday -> the Friday before, Sunday -> the Monday after
  kNextMonday,     // Saturday or Sunday -> the Monday after, or the first weekday after it
                   // that no other holiday of the calendar occupies (Christmas on a
                   // Saturday -> Monday 27th, Boxing Day on the Sunday -> Tuesday 28th)
};

struct HolidayRule {
  std::string name;
  HolidayDateRule date;
  ObservedRule observed = ObservedRule::kSameDay;
};

struct ObservedHoliday {
  std::string name;
  date::year_month_day date;      // the statutory date
  date::year_month_day observed;  // the day treated as the holiday
};

// Western Easter Sunday of `year` (Gregorian calendar; the anonymous algorithm published by
// Meeus, "Astronomical Algorithms", valid for every Gregorian year).
date::year_month_day EasterSunday(date::year year);

class HolidayCalendar {
 public:
  HolidayCalendar() = default;  // no holidays

  // Checks each rule (a valid month and day, 1 <= n <= 5, explicit dates valid) and names the
  // first bad one: "holiday 3 (\"Memorial Day\"): n must be 1..5".
  static Result<HolidayCalendar> Create(std::vector<HolidayRule> rules);

  // The holidays observed in `year`, ordered by observed date (then statutory date). A holiday
  // of one year may be observed in the year before: 2028-01-01, a Saturday, is observed on
  // 2027-12-31 under kFridayOrMonday and is listed in 2027.
  std::vector<ObservedHoliday> ObservedIn(date::year year) const;

  // Whether `day` is an observed holiday.
  bool IsHoliday(date::year_month_day day) const;

  const std::vector<HolidayRule>& rules() const { return rules_; }

 private:
  explicit HolidayCalendar(std::vector<HolidayRule> rules) : rules_(std::move(rules)) {}

  std::vector<HolidayRule> rules_;
};

}  // namespace ampledger
