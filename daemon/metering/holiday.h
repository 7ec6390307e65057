// daemon/metering/holiday.h
// Holiday rules as tariffs state them, and the calendar of observed holidays they produce.
// A rule names the statutory date (a fixed date, the nth or last weekday of a month, a weekday
// on or before a date, a day relative to Easter, or an explicit list) and how a date that falls
// on a weekend is observed. HolidayCalendar is immutable after Create(); any thread may call
// it. Pure: no I/O; the TOML tariff parser in config/ fills HolidayRule (config/tariff_config.h).
#pragma once

#include <string>
#include <vector>

#include <date/date.h>

#include "config/status.h"
#include "config/tariff_config.h"  // the rule types

namespace ampledger {

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
