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

// Whole micro-units: the bill engine's arithmetic is exact for these (config/tariff_config.h).
bool IsMicro(double value) {
  if (!std::isfinite(value) || std::fabs(value) > 1e9) return false;
  double micros = value * 1e6;
  return std::fabs(micros - std::nearbyint(micros)) < 1e-3;
}

Status CheckPrice(const std::string& what, double value) {
  if (IsMicro(value)) return Status::Ok();
  return Status::InvalidArgument(what + " must be a number with at most 6 decimal places, "
                                 "at most 1e9 in size");
}

bool HasPeriod(const TariffRates& rates, const std::string& period) {
  for (const Season& season : rates.seasons) {
    if (PriceIndex(season, period) >= 0) return true;
  }
  return false;
}

bool HasSeason(const TariffRates& rates, const std::string& name) {
  for (const Season& season : rates.seasons) {
    if (season.name == name) return true;
  }
  return false;
}

Status CheckTiers(const TariffConfig& config) {
  for (std::size_t t = 0; t < config.tiers.size(); ++t) {
    const TierTable& table = config.tiers[t];
    std::string context = "tiers of season \"" + table.season + "\"";
    if (!HasSeason(config.rates, table.season)) {
      return Status::InvalidArgument(context + ": no such season");
    }
    for (std::size_t k = 0; k < t; ++k) {
      if (config.tiers[k].season == table.season) {
        return Status::InvalidArgument(context + ": given twice");
      }
    }
    if (table.blocks.empty()) return Status::InvalidArgument(context + ": no block");
    for (std::size_t b = 0; b < table.blocks.size(); ++b) {
      const TierBlock& block = table.blocks[b];
      std::string where = context + ": block " + std::to_string(b + 1);
      bool last = b + 1 == table.blocks.size();
      if (last && block.kwh != 0) {
        return Status::InvalidArgument(where + ": the last block takes everything above; "
                                       "leave its size out");
      }
      if (!last && !(block.kwh > 0 && block.kwh <= 1e9)) {
        return Status::InvalidArgument(where + ": size must be above 0 kWh, up to 1e9");
      }
      Status price = CheckPrice(where + ": price", block.per_kwh);
      if (!price.ok()) return price;
    }
  }
  if (config.prorate_days < 1 || config.prorate_days > 366) {
    return Status::InvalidArgument("prorate days must be 1..366");
  }
  return Status::Ok();
}

Status CheckDemand(const TariffConfig& config, const DemandCharge& demand) {
  if (demand.interval_minutes != 15 && demand.interval_minutes != 30 &&
      demand.interval_minutes != 60) {
    return Status::InvalidArgument("interval must be 15, 30 or 60 minutes");
  }
  Status status = CheckPrice("price per kW", demand.per_kw);
  if (status.ok()) status = CheckPrice("minimum amount", demand.minimum_amount);
  if (!status.ok()) return status;
  if (demand.window) {
    status = CheckBound("window start", demand.window->start_minute);
    if (status.ok()) status = CheckBound("window end", demand.window->end_minute);
    if (!status.ok()) return status;
    if (demand.window->start_minute % 1440 == demand.window->end_minute % 1440) {
      return Status::InvalidArgument("window start and end are the same time");
    }
    if (demand.window->day_kinds == 0 || demand.window->day_kinds > kEveryDayKind) {
      return Status::InvalidArgument("window names no day kind");
    }
  }
  for (const std::string& period : demand.periods) {
    if (!HasPeriod(config.rates, period)) {
      return Status::InvalidArgument("period \"" + period + "\" is in no season");
    }
  }
  for (const std::string& season : demand.seasons) {
    if (!HasSeason(config.rates, season)) {
      return Status::InvalidArgument("season \"" + season + "\" does not exist");
    }
  }
  if (!(demand.ratchet_percent >= 0 && demand.ratchet_percent <= 100) ||
      demand.ratchet_cycles < 0 || demand.ratchet_cycles > 36 ||
      (demand.ratchet_percent > 0) != (demand.ratchet_cycles > 0)) {
    return Status::InvalidArgument("a ratchet needs both a percent (above 0, up to 100) and a "
                                   "number of previous cycles (1..36)");
  }
  if (!(demand.minimum_kw >= 0 && demand.minimum_kw <= 1e6)) {
    return Status::InvalidArgument("minimum kW must be 0..1e6");
  }
  if (!(demand.power_factor_target > 0 && demand.power_factor_target <= 1)) {
    return Status::InvalidArgument("power factor target must be above 0, up to 1");
  }
  return Status::Ok();
}

Status CheckCharges(const TariffConfig& config) {
  for (const Season& season : config.rates.seasons) {
    for (const PeriodPrice& price : season.prices) {
      Status status = CheckPrice("price of \"" + price.period + "\"", price.per_kwh);
      if (!status.ok()) return status.WithContext("season \"" + season.name + "\"");
    }
  }
  Status status = CheckTiers(config);
  if (!status.ok()) return status;
  for (const EnergyAdder& adder : config.adders) {
    status = CheckPrice("adder \"" + adder.name + "\": price", adder.per_kwh);
    if (!status.ok()) return status;
  }
  for (const FixedCharge& fixed : config.fixed) {
    status = CheckPrice("fixed charge \"" + fixed.name + "\": amount", fixed.amount);
    if (!status.ok()) return status;
  }
  for (const DemandCharge& demand : config.demand) {
    status = CheckDemand(config, demand);
    if (!status.ok()) return status.WithContext("demand charge \"" + demand.name + "\"");
  }
  status = CheckPrice("minimum bill", config.minimum_bill);
  if (status.ok() && config.minimum_bill < 0) {
    status = Status::InvalidArgument("minimum bill must not be negative");
  }
  if (!status.ok()) return status;
  for (const PercentAdjustment& adjustment : config.adjustments) {
    if (!(adjustment.percent >= -100 && adjustment.percent <= 100) ||
        !IsMicro(adjustment.percent / 100)) {
      return Status::InvalidArgument("adjustment \"" + adjustment.name +
                                     "\": percent must be -100..100 with at most 4 decimal "
                                     "places");
    }
  }
  status = CheckPrice("export credit", config.export_rule.per_kwh);
  if (status.ok() && config.export_rule.per_kwh < 0) {
    status = Status::InvalidArgument("export credit must not be negative");
  }
  return status;
}

}  // namespace

Result<Tariff> Tariff::Create(TariffRates rates) {
  TariffConfig config;
  config.rates = std::move(rates);
  return Create(std::move(config));
}

Result<Tariff> Tariff::Create(TariffConfig config) {
  TariffRates& rates = config.rates;
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
  Status charges = CheckCharges(config);
  if (!charges.ok()) return charges;

  Result<HolidayCalendar> holidays = HolidayCalendar::Create(rates.holidays);
  if (!holidays.ok()) return holidays.status();
  Tariff tariff(std::move(config));
  tariff.holidays_ = *holidays;
  for (const Season& season : tariff.rates().seasons) {
    std::optional<HolidayCalendar> own;
    if (season.holidays) {
      Result<HolidayCalendar> list = HolidayCalendar::Create(*season.holidays);
      if (!list.ok()) return list.status().WithContext("season \"" + season.name + "\"");
      own = *list;
    }
    tariff.season_holidays_.push_back(std::move(own));
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
  for (std::size_t k = 0; k < rates().seasons.size(); ++k) {
    if (SeasonHolds(rates().seasons[k], day)) return static_cast<int>(k);
  }
  assert(false && "Create() checked that the seasons cover the year");
  return 0;
}

DayKind Tariff::KindOf(date::year_month_day day, int season) const {
  const std::optional<HolidayCalendar>& own = season_holidays_[season];
  const HolidayCalendar& holidays = own ? *own : holidays_;
  if (holidays.IsHoliday(day)) return DayKind::kHoliday;
  date::weekday weekday{date::sys_days{day}};
  for (date::weekday weekend : rates().weekend_days) {
    if (weekday == weekend) return DayKind::kWeekend;
  }
  return DayKind::kWeekday;
}

RateSlot Tariff::At(date::year_month_day day, int minute_of_day) const {
  int season = SeasonOf(day.month() / day.day());
  return PeriodOf(day, season, KindOf(day, season), minute_of_day);
}

RateSlot Tariff::AtInstant(const LocalTime& local, UnixMs start_ms) const {
  LocalMoment moment = local.At(start_ms);
  return At(moment.date, moment.minute_of_day);
}

RateSlot Tariff::PeriodOf(date::year_month_day day, int season_index, DayKind kind,
                          int minute_of_day) const {
  RateSlot slot{season_index, default_period_[season_index], kind};
  const Season& season = rates().seasons[season_index];
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
    const Season& season = rates().seasons[key.first];
    const PeriodPrice& price = season.prices[key.second];
    lines.push_back({season.name, price.period, energy, price.per_kwh, energy * price.per_kwh});
  }
  return lines;
}

}  // namespace ampledger
