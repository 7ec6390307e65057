// daemon/metering/holiday.cpp
#include "daemon/metering/holiday.h"

#include <algorithm>
#include <set>

namespace ampledger {
namespace {

using date::sys_days;
using date::year_month_day;

struct StatutoryDates {
  date::year year;
  std::vector<year_month_day>* out;

  void Add(year_month_day day) const {
    if (day.ok()) out->push_back(day);
  }
  void operator()(const FixedDate& rule) const { Add(year / rule.month_day); }
  void operator()(const NthWeekday& rule) const {
    date::year_month_weekday nth{year / rule.month / rule.weekday[rule.n]};
    if (nth.ok()) Add(year_month_day{sys_days{nth}});
  }
  void operator()(const LastWeekday& rule) const {
    Add(year_month_day{sys_days{year / rule.month / rule.weekday[date::last]}});
  }
  void operator()(const WeekdayOnOrBefore& rule) const {
    year_month_day limit = year / rule.month_day;
    if (!limit.ok()) return;
    sys_days day{limit};
    Add(year_month_day{day - (date::weekday{day} - rule.weekday)});
  }
  void operator()(const EasterRelative& rule) const {
    Add(year_month_day{sys_days{EasterSunday(year)} + date::days{rule.offset_days}});
  }
  void operator()(const ExplicitDates& rule) const {
    for (year_month_day day : rule.dates) {
      if (day.year() == year) Add(day);
    }
  }
};

bool IsWeekend(sys_days day) {
  date::weekday weekday{day};
  return weekday == date::Saturday || weekday == date::Sunday;
}

Status CheckRule(const HolidayRule& rule) {
  struct Checker {
    std::string operator()(const FixedDate& r) const {
      return r.month_day.ok() ? "" : "not a valid month and day";
    }
    std::string operator()(const NthWeekday& r) const {
      if (!r.month.ok() || !r.weekday.ok()) return "not a valid month and weekday";
      return r.n >= 1 && r.n <= 5 ? "" : "n must be 1..5";
    }
    std::string operator()(const LastWeekday& r) const {
      return r.month.ok() && r.weekday.ok() ? "" : "not a valid month and weekday";
    }
    std::string operator()(const WeekdayOnOrBefore& r) const {
      return r.month_day.ok() && r.weekday.ok() ? "" : "not a valid month, day and weekday";
    }
    std::string operator()(const EasterRelative& r) const {
      // Within a year of Easter, so ObservedIn() finds every date from the years either side.
      return r.offset_days >= -366 && r.offset_days <= 366 ? "" : "offset must be -366..366 days";
    }
    std::string operator()(const ExplicitDates& r) const {
      for (year_month_day day : r.dates) {
        if (!day.ok()) return "an explicit date is not a valid date";
      }
      return "";
    }
  };
  std::string error = std::visit(Checker{}, rule.date);
  return error.empty() ? Status::Ok() : Status::InvalidArgument(error);
}

}  // namespace

year_month_day EasterSunday(date::year year) {
  int y = static_cast<int>(year);
  int a = y % 19;
  int b = y / 100;
  int c = y % 100;
  int d = b / 4;
  int e = b % 4;
  int f = (b + 8) / 25;
  int g = (b - f + 1) / 3;
  int h = (19 * a + b - d - g + 15) % 30;
  int i = c / 4;
  int k = c % 4;
  int l = (32 + 2 * e + 2 * i - h - k) % 7;
  int m = (a + 11 * h + 22 * l) / 451;
  int month = (h + l - 7 * m + 114) / 31;
  int day = (h + l - 7 * m + 114) % 31 + 1;
  return year / date::month{static_cast<unsigned>(month)} / date::day{static_cast<unsigned>(day)};
}

Result<HolidayCalendar> HolidayCalendar::Create(std::vector<HolidayRule> rules) {
  for (std::size_t k = 0; k < rules.size(); ++k) {
    Status status = CheckRule(rules[k]);
    if (!status.ok()) {
      return Status::InvalidArgument("holiday " + std::to_string(k + 1) + " (\"" +
                                     rules[k].name + "\"): " + status.message());
    }
  }
  return HolidayCalendar(std::move(rules));
}

std::vector<ObservedHoliday> HolidayCalendar::ObservedIn(date::year year) const {
  // Observing moves a date by at most a few days, so only the years either side can spill
  // into `year`. Two passes over every statutory date of the three years, in date order:
  // first the holidays that stay put or move by a fixed rule, then the weekend holidays that
  // move to the next weekday free of the others.
  std::vector<std::pair<year_month_day, const HolidayRule*>> statutory;
  for (date::year y = year - date::years{1}; y <= year + date::years{1}; ++y) {
    for (const HolidayRule& rule : rules_) {
      std::vector<year_month_day> days;
      std::visit(StatutoryDates{y, &days}, rule.date);
      for (year_month_day day : days) statutory.emplace_back(day, &rule);
    }
  }
  std::stable_sort(statutory.begin(), statutory.end(),
                   [](const auto& a, const auto& b) { return a.first < b.first; });

  std::set<sys_days> taken;
  std::vector<ObservedHoliday> observed;
  auto observe = [&](year_month_day day, const HolidayRule& rule, sys_days when) {
    taken.insert(when);
    if (year_month_day{when}.year() == year) observed.push_back({rule.name, day, when});
  };
  for (const auto& [day, rule] : statutory) {
    sys_days when{day};
    date::weekday weekday{when};
    if (rule->observed == ObservedRule::kNextMonday && IsWeekend(when)) continue;
    if (rule->observed == ObservedRule::kFridayOrMonday) {
      if (weekday == date::Saturday) when -= date::days{1};
      if (weekday == date::Sunday) when += date::days{1};
    }
    observe(day, *rule, when);
  }
  for (const auto& [day, rule] : statutory) {
    sys_days when{day};
    if (rule->observed != ObservedRule::kNextMonday || !IsWeekend(when)) continue;
    when += date::Monday - date::weekday{when};
    while (taken.count(when) || IsWeekend(when)) when += date::days{1};
    observe(day, *rule, when);
  }
  std::stable_sort(observed.begin(), observed.end(),
                   [](const auto& a, const auto& b) { return a.observed < b.observed; });
  return observed;
}

bool HolidayCalendar::IsHoliday(year_month_day day) const {
  for (const ObservedHoliday& holiday : ObservedIn(day.year())) {
    if (holiday.observed == day) return true;
  }
  return false;
}

}  // namespace ampledger
