// daemon/metering/tariff.h
// A validated tariff: which rate period, at which price per kWh, applies at each local moment,
// and the energy charge of a series of 15-minute buckets. The other charges of the file
// (tiers, adders, fixed and demand charges, adjustments, export, rounding) are checked here and
// applied by ComputeBill (daemon/metering/bill.h). Pure; a Tariff is immutable after Create()
// and any thread may call it.
//
// How a local moment finds its period:
//  1. Season: the one whose [first_day, last_day] (inclusive, month and day) holds the local
//     date. A range whose last_day comes before its first_day spans the year end (1 Nov to
//     30 Apr). Create() checks that the seasons cover every day of the year, 29 February
//     included, exactly once.
//  2. Day kind: kHoliday if the season's holiday calendar (or the tariff's, when the season has
//     none) observes a holiday on the local date; else kWeekend if the weekday is one of
//     `weekend_days`; else kWeekday. A window that crosses midnight is matched by the day kind
//     of each calendar day it touches: a "weekdays 19:00-07:00" window covers Friday evening
//     but not Saturday morning, and Monday morning but not Sunday evening.
//  3. Window: the first window of the season, in the order written, that holds the time of
//     day, the day kind and the month. Later windows may be written as the general case:
//     a month-only window listed first overrides them (10:00-14:00 in March and April only).
//  4. Otherwise the season's default_period.
// Window bounds are on quarter hours, and every UTC offset in use since 1980 is a whole number
// of quarter hours, so each 15-minute UTC bucket lies in exactly one period: the one in force
// at its start. (A few zones changed clocks at 00:01 local before 2011; see
// tests/reference/tz_reference_test.cpp. For them the minute after such a change is priced as
// the rest of its bucket.)
#pragma once

#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include <date/date.h>

#include "config/status.h"
#include "config/tariff_config.h"
#include "daemon/metering/holiday.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/reading.h"

namespace ampledger {

// The season and period in force at one local moment, as indexes into the Tariff's seasons
// and that season's prices.
struct RateSlot {
  int season = 0;
  int period = 0;
  DayKind day_kind = DayKind::kWeekday;
};

// Energy of one 15-minute UTC bucket: [start_ms, start_ms + kMsPerBucket).
struct BucketEnergy {
  UnixMs start_ms = 0;
  double kwh = 0;
};

// One line of an energy charge: all the energy of one period of one season.
struct EnergyCharge {
  std::string season;
  std::string period;
  double kwh = 0;
  double per_kwh = 0;
  double amount = 0;  // kwh x per_kwh, not rounded: the statement rounds each line
};

class Tariff {
 public:
  // Validates `rates` and names the first problem, e.g.
  //   "season \"winter\": window 2: start 07:10 is not on a quarter hour"
  //   "02-29 is in no season"
  static Result<Tariff> Create(TariffRates rates);

  // Same for a whole tariff file: the rates, then tiers, adders, fixed and demand charges,
  // adjustments, export and rounding (each price to at most 6 decimal places), e.g.
  //   "tiers of season \"summer\": block 2: size must be above 0 (0 only in the last block)"
  static Result<Tariff> Create(TariffConfig config);

  const TariffRates& rates() const { return config_.rates; }
  const TariffConfig& config() const { return config_; }

  // The day kind of local date `day` in season `season`.
  DayKind KindOf(date::year_month_day day, int season) const;

  // The season of a local date.
  int SeasonOf(date::month_day day) const;

  // The season and period at local `day` and `minute_of_day` (0..1439).
  RateSlot At(date::year_month_day day, int minute_of_day) const;

  // The season and period of the 15-minute bucket starting at `start_ms` in `local`'s zone.
  RateSlot AtInstant(const LocalTime& local, UnixMs start_ms) const;

  // Sums `buckets` by season and period, each bucket priced at its start in `local`'s zone.
  // Lines come in season order, then in the order of the season's prices; periods with no
  // bucket get no line. InvalidArgument when a bucket does not start on a 15-minute boundary.
  Result<std::vector<EnergyCharge>> PriceEnergy(const LocalTime& local,
                                                std::span<const BucketEnergy> buckets) const;

 private:
  explicit Tariff(TariffConfig config) : config_(std::move(config)) {}

  RateSlot PeriodOf(date::year_month_day day, int season, DayKind kind, int minute_of_day) const;

  TariffConfig config_;
  HolidayCalendar holidays_;
  std::vector<std::optional<HolidayCalendar>> season_holidays_;
  // window_period_[s][w]: index in seasons[s].prices of window w's period; default_period_[s].
  std::vector<std::vector<int>> window_period_;
  std::vector<int> default_period_;
};

}  // namespace ampledger
