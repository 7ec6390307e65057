// daemon/metering/rate_timeline.h
// What the tariff schedule asks per kWh over time: the rate in force in each 15-minute bucket,
// the same rates merged into intervals (for shading a chart), and the next change after an
// instant. Pure; the schedule is immutable, so any thread may call these.
//
// The quoted price of a moment (QuotedPricePerKwh) is what the first kWh used then costs
// before the bill's other lines: the time-of-use energy price of its period, plus every
// per-kWh adder of the tariff, plus the first block's price of its season's tier table when
// the season has one (tiers are charged on top of time-of-use energy, bill.h). Adjustments
// (taxes, rebates), fixed and demand charges, the minimum bill and export credits are left
// out: they depend on the whole cycle, not the moment.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "config/status.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/money.h"
#include "daemon/metering/tariff_schedule.h"

namespace ampledger {

// The rate of one span of time under the schedule.
struct RateInterval {
  TimeRange range;
  const ScheduledTariff* tariff = nullptr;  // owned by the schedule
  std::string season;
  std::string period;
  Micros price_per_kwh = 0;  // the quoted price (see the file comment)

  // Same tariff, season, period and price: the two may be merged.
  bool SameRate(const RateInterval& other) const {
    return tariff == other.tariff && season == other.season && period == other.period &&
           price_per_kwh == other.price_per_kwh;
  }
};

// The quoted price of `slot` under `tariff`, in micro-units per kWh.
Micros QuotedPricePerKwh(const Tariff& tariff, const RateSlot& slot);

// The rate of the 15-minute bucket starting at `start_ms` (a multiple of kMsPerBucket).
// Precondition: !schedule.empty().
RateInterval RateOfBucket(const TariffSchedule& schedule, const LocalTime& local,
                          UnixMs start_ms);

// The rates over `range`, one interval per run of buckets with the same rate (SameRate), in
// time order, tiling `range`. InvalidArgument when a bound is not on a 15-minute boundary or
// the range is empty. Precondition: !schedule.empty().
Result<std::vector<RateInterval>> RateIntervals(const TariffSchedule& schedule,
                                                const LocalTime& local, TimeRange range);

// The rate in force at `instant`, with its interval running from the start of the bucket that
// holds `instant` to the next change of rate (a different tariff, season, period or price),
// searched up to `horizon_ms` after `instant`; range.end_ms is 0 when none comes by then.
// Precondition: !schedule.empty().
struct RateNow {
  RateInterval current;
  std::optional<RateInterval> next;  // the first bucket's rate after the change
};
RateNow RateAt(const TariffSchedule& schedule, const LocalTime& local, UnixMs instant,
               UnixMs horizon_ms);

}  // namespace ampledger
