// config/tariff_config.h
// A tariff as plain structs: what a tariff file (format: config/tariffs/README.md) says, before
// any evaluation. ReadTariffFile() (config/tariff_reader.h) fills these; Tariff::Create and
// HolidayCalendar::Create (daemon/metering) validate and evaluate them. Only std and date
// types here, so config/ stays below metering. Plain values; any thread may read them.
//
// Money. Prices are written in the site's currency as decimal numbers with at most 6 places
// (0.04362 per kWh); the bill engine turns each into whole micro-units (millionths) and does
// all money arithmetic in integers, so results are exact to the cent (daemon/metering/money.h).
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <variant>
#include <vector>

#include <date/date.h>

namespace ampledger {

// ---- Holidays ------------------------------------------------------------------------------

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

// ---- Time-of-use energy rates --------------------------------------------------------------

enum class DayKind : std::uint8_t { kWeekday = 0, kWeekend = 1, kHoliday = 2 };

// A set of day kinds, one bit each.
constexpr unsigned DayKindBit(DayKind kind) { return 1u << static_cast<unsigned>(kind); }
constexpr unsigned kEveryDayKind = 0b111;

// A set of months, bit (m - 1) for month m.
constexpr unsigned MonthBit(date::month month) { return 1u << (static_cast<unsigned>(month) - 1); }
constexpr unsigned kEveryMonth = 0xfff;

// A rate period in force during [start_minute, end_minute) of local time of day on the given
// day kinds and months. Bounds are multiples of 15 in 0..1440; end_minute <= start_minute
// means the window crosses midnight ([start, 24:00) and [00:00, end)); equal bounds are
// refused (write 0 and 1440 for the whole day).
struct RateWindow {
  std::string period;
  int start_minute = 0;
  int end_minute = 1440;
  unsigned day_kinds = kEveryDayKind;  // DayKindBit()s
  unsigned months = kEveryMonth;       // MonthBit()s; a window that exists only in some months
};

struct PeriodPrice {
  std::string period;   // "on-peak", "off-peak", ...
  double per_kwh = 0;   // in the site's currency; a period priced 0 gives no bill line
};

struct Season {
  std::string name;
  date::month_day first_day;  // inclusive
  date::month_day last_day;   // inclusive; before first_day: the season spans the year end
  std::vector<PeriodPrice> prices;  // every period the windows and the default name
  std::vector<RateWindow> windows;  // first match wins
  std::string default_period;       // for any time no window holds
  // This season's own holiday list, when it differs from the tariff's.
  std::optional<std::vector<HolidayRule>> holidays;
};

// What a tariff file says about energy rates by time of use.
struct TariffRates {
  std::string name;
  std::vector<Season> seasons;
  std::vector<HolidayRule> holidays;
  std::vector<date::weekday> weekend_days = {date::Saturday, date::Sunday};
};

// ---- Charges besides time-of-use energy ----------------------------------------------------

// One block of a tier table: the next `kwh` of the cycle's energy at `per_kwh`.
struct TierBlock {
  double kwh = 0;      // size of the block; 0 in the last block = everything above
  double per_kwh = 0;  // any price: tables may incline or decline
};

// The blocks billed on the cycle's energy in one season.
struct TierTable {
  std::string season;  // a season name of the rates
  std::vector<TierBlock> blocks;
};

// A per-kWh charge on all billed energy (delivery, a power-cost line, a rider).
struct EnergyAdder {
  std::string name;
  double per_kwh = 0;
};

enum class FixedPer { kDay, kCycle };

struct FixedCharge {
  std::string name;
  double amount = 0;  // per day or per cycle
  FixedPer per = FixedPer::kCycle;
};

// How a measured power factor raises billing demand.
enum class PowerFactorMethod {
  kNone,
  kAddDifference,  // demand x (1 + (target - PF)) when PF < target
  kRatio,          // demand x target / PF when PF < target
};

// A charge per kW of billing demand: the highest mean power over a `interval_minutes`
// interval of the cycle (intervals aligned on the local clock), counting only intervals inside
// the window and periods given.
struct DemandCharge {
  std::string name;
  double per_kw = 0;
  int interval_minutes = 15;  // 15, 30 or 60
  // Optional daily window: only intervals that start inside [start, end) local time, on these
  // day kinds, count. No window: every interval.
  std::optional<RateWindow> window;  // `period` unused
  std::vector<std::string> periods;  // only intervals in these rate periods; empty = all
  std::vector<std::string> seasons;  // only cycles' days in these seasons; empty = all
  double ratchet_percent = 0;        // billing demand >= this % of the highest of ...
  int ratchet_cycles = 0;            // ... the previous N cycles' billing demands
  double minimum_kw = 0;             // billing demand is at least this
  PowerFactorMethod power_factor = PowerFactorMethod::kNone;
  double power_factor_target = 0.9;
  double minimum_amount = 0;  // the charge is at least this
};

// A percentage of the running total, in file order: a rebate (negative), then a tax.
struct PercentAdjustment {
  std::string name;
  double percent = 0;  // 13 for 13 %; negative for a credit
};

enum class ExportMethod {
  kNone,          // exports earn nothing
  kNetMetering,   // exports offset imports kWh for kWh, surplus kWh carried forward
  kNetBilling,    // imports at retail, exports credited at `export_per_kwh`
};

enum class Netting { kInterval, kPeriod, kCycle };

struct ExportRule {
  ExportMethod method = ExportMethod::kNone;
  Netting netting = Netting::kInterval;  // net metering only
  double per_kwh = 0;                    // net billing: the export credit per kWh
};

enum class RoundingMode { kHalfUp, kHalfEven };

struct Rounding {
  bool each_line = true;  // each line to the cent before summing; false: only the total
  RoundingMode mode = RoundingMode::kHalfUp;  // half-up = half away from zero for credits
};

// A whole tariff file.
struct TariffConfig {
  TariffRates rates;
  std::string currency;  // ISO 4217; "" = any
  std::vector<TierTable> tiers;  // one per season at most; a season without one has no tiers
  bool prorate_tiers = false;    // scale block sizes by cycle days / prorate_days
  int prorate_days = 30;
  std::vector<EnergyAdder> adders;
  std::vector<FixedCharge> fixed;
  std::vector<DemandCharge> demand;
  double minimum_bill = 0;  // the charges before adjustments are raised to this
  std::vector<PercentAdjustment> adjustments;
  ExportRule export_rule;
  Rounding rounding;
};

}  // namespace ampledger
