// daemon/metering/tariff.cpp
#include "daemon/metering/tariff.h"

#include <cassert>
#include <cmath>
#include <cstdio>
#include <map>

namespace ampledger {
namespace {

bool SeasonHolds(const Season& season, date::month_day day) {
  if (season.first_day <= season.last_day) {
    return season.first_day <= day && day <= season.last_day;
  }
  return day >= season.first_day || day <= season.last_day;  // spans the year end
}

bool WindowHolds(const RateWindow& window, int minute) {
  if (window.start_minute < window.end_minute) {
    return window.start_minute <= minute && minute < window.end_minute;
  }
  return minute >= window.start_minute || minute < window.end_minute;
}

std::string Clock(int minute) {
  char text[8];
  std::snprintf(text, sizeof text, "%02d:%02d", minute / 60, minute % 60);
  return text;
}

std::string MonthDayText(date::month_day day) {
  char text[8];
  std::snprintf(text, sizeof text, "%02u-%02u", static_cast<unsigned>(day.month()),
                static_cast<unsigned>(day.day()));
  return text;
}

int PriceIndex(const Season& season, const std::string& period) {
  for (std::size_t k = 0; k < season.prices.size(); ++k) {
    if (season.prices[k].period == period) return static_cast<int>(k);
  }
  return -1;
}

Status CheckBound(const char* which, int minute) {
  if (minute < 0 || minute > 1440) {
    return Status::InvalidArgument(std::string(which) + " " + std::to_string(minute) +
                                   " is not a time of day in minutes (0..1440)");
  }
  if (minute % 15 != 0) {
    return Status::InvalidArgument(std::string(which) + " " + Clock(minute) +
                                   " is not on a quarter hour");
  }
  return Status::Ok();
}

Status CheckWindow(const Season& season, const RateWindow& window) {
  Status status = CheckBound("start", window.start_minute);
  if (status.ok()) status = CheckBound("end", window.end_minute);
  if (!status.ok()) return status;
  if (window.start_minute % 1440 == window.end_minute % 1440) {
    return Status::InvalidArgument("start and end are the same time; write 00:00 to 24:00 for "
                                   "the whole day");
  }
  if (window.day_kinds == 0 || window.day_kinds > kEveryDayKind) {
    return Status::InvalidArgument("names no day kind");
  }
  if (window.months == 0 || window.months > kEveryMonth) {
    return Status::InvalidArgument("names no month");
  }
  if (PriceIndex(season, window.period) < 0) {
    return Status::InvalidArgument("period \"" + window.period + "\" has no price");
  }
  return Status::Ok();
}

Status CheckSeason(const Season& season) {
  if (!season.first_day.ok() || !season.last_day.ok()) {
    return Status::InvalidArgument("first or last day is not a valid month and day");
  }
  for (std::size_t k = 0; k < season.prices.size(); ++k) {
    const PeriodPrice& price = season.prices[k];
    if (price.period.empty()) return Status::InvalidArgument("a period has no name");
    if (!std::isfinite(price.per_kwh)) {
      return Status::InvalidArgument("price of \"" + price.period + "\" is not a number");
    }
    if (PriceIndex(season, price.period) != static_cast<int>(k)) {
      return Status::InvalidArgument("period \"" + price.period + "\" is priced twice");
    }
  }
  if (PriceIndex(season, season.default_period) < 0) {
    return Status::InvalidArgument("default period \"" + season.default_period +
                                   "\" has no price");
  }
  for (std::size_t k = 0; k < season.windows.size(); ++k) {
    Status status = CheckWindow(season, season.windows[k]);
    if (!status.ok()) return status.WithContext("window " + std::to_string(k + 1));
  }
  return Status::Ok();
}

}  // namespace

Result<Tariff> Tariff::Create(TariffRates rates) {
  if (rates.seasons.empty()) return Status::InvalidArgument("no season");
  for (const Season& season : rates.seasons) {
    Status status = CheckSeason(season);
    if (!status.ok()) return status.WithContext("season \"" + season.name + "\"");
  }
  for (date::weekday weekday : rates.weekend_days) {
    if (!weekday.ok()) return Status::InvalidArgument("a weekend day is not a weekday");
  }
  // Every day of a leap year lies in exactly one season.
  const date::sys_days leap_year{date::year{2000} / 1 / 1};
  for (date::sys_days day = leap_year; day < leap_year + date::days{366}; day += date::days{1}) {
    date::year_month_day ymd{day};
    date::month_day month_day = ymd.month() / ymd.day();
    std::vector<std::string> holders;
    for (const Season& season : rates.seasons) {
      if (SeasonHolds(season, month_day)) holders.push_back("\"" + season.name + "\"");
    }
    if (holders.empty()) {
      return Status::InvalidArgument(MonthDayText(month_day) + " is in no season");
    }
    if (holders.size() > 1) {
      return Status::InvalidArgument(MonthDayText(month_day) + " is in seasons " + holders[0] +
                                     " and " + holders[1]);
    }
  }

  Tariff tariff(std::move(rates));
  for (const Season& season : tariff.rates_.seasons) {
    std::vector<int> periods;
    for (const RateWindow& window : season.windows) {
      periods.push_back(PriceIndex(season, window.period));
    }
    tariff.window_period_.push_back(std::move(periods));
    tariff.default_period_.push_back(PriceIndex(season, season.default_period));
  }
  return tariff;
}

int Tariff::SeasonOf(date::month_day day) const {
  for (std::size_t k = 0; k < rates_.seasons.size(); ++k) {
    if (SeasonHolds(rates_.seasons[k], day)) return static_cast<int>(k);
  }
  assert(false && "Create() checked that the seasons cover the year");
  return 0;
}

DayKind Tariff::KindOf(date::year_month_day day, int season) const {
  const std::optional<HolidayCalendar>& own = rates_.seasons[season].holidays;
  const HolidayCalendar& holidays = own ? *own : rates_.holidays;
  if (holidays.IsHoliday(day)) return DayKind::kHoliday;
  date::weekday weekday{date::sys_days{day}};
  for (date::weekday weekend : rates_.weekend_days) {
    if (weekday == weekend) return DayKind::kWeekend;
  }
  return DayKind::kWeekday;
}

RateSlot Tariff::At(date::year_month_day day, int minute_of_day) const {
  int season = SeasonOf(day.month() / day.day());
  return PeriodOf(day, season, KindOf(day, season), minute_of_day);
}

RateSlot Tariff::PeriodOf(date::year_month_day day, int season_index, DayKind kind,
                          int minute_of_day) const {
  RateSlot slot{season_index, default_period_[season_index], kind};
  const Season& season = rates_.seasons[season_index];
  for (std::size_t k = 0; k < season.windows.size(); ++k) {
    const RateWindow& window = season.windows[k];
    if ((window.months & MonthBit(day.month())) && (window.day_kinds & DayKindBit(kind)) &&
        WindowHolds(window, minute_of_day)) {
      slot.period = window_period_[season_index][k];
      break;
    }
  }
  return slot;
}

Result<std::vector<EnergyCharge>> Tariff::PriceEnergy(
    const LocalTime& local, std::span<const BucketEnergy> buckets) const {
  std::map<std::pair<int, int>, double> kwh;  // (season, period) -> kWh
  // Buckets come mostly in order, 96 to a day: look the season and day kind up once a day.
  std::optional<date::year_month_day> day;
  int season = 0;
  DayKind kind = DayKind::kWeekday;
  for (const BucketEnergy& bucket : buckets) {
    if (bucket.start_ms % kMsPerBucket != 0) {
      return Status::InvalidArgument("bucket at " + std::to_string(bucket.start_ms) +
                                     " ms does not start on a 15-minute boundary");
    }
    LocalMoment moment = local.At(bucket.start_ms);
    if (moment.date != day) {
      day = moment.date;
      season = SeasonOf(day->month() / day->day());
      kind = KindOf(*day, season);
    }
    RateSlot slot = PeriodOf(*day, season, kind, moment.minute_of_day);
    kwh[{slot.season, slot.period}] += bucket.kwh;
  }
  std::vector<EnergyCharge> lines;
  for (const auto& [key, energy] : kwh) {
    const Season& season = rates_.seasons[key.first];
    const PeriodPrice& price = season.prices[key.second];
    lines.push_back({season.name, price.period, energy, price.per_kwh, energy * price.per_kwh});
  }
  return lines;
}

}  // namespace ampledger
