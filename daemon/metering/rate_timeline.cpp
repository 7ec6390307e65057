// daemon/metering/rate_timeline.cpp
#include "daemon/metering/rate_timeline.h"

namespace ampledger {
namespace {

UnixMs BucketStart(UnixMs instant) {
  return instant - (((instant % kMsPerBucket) + kMsPerBucket) % kMsPerBucket);
}

}  // namespace

Micros QuotedPricePerKwh(const Tariff& tariff, const RateSlot& slot) {
  const TariffConfig& config = tariff.config();
  const Season& season = config.rates.seasons[slot.season];
  Micros price = ToMicros(season.prices[slot.period].per_kwh);
  for (const EnergyAdder& adder : config.adders) price += ToMicros(adder.per_kwh);
  for (const TierTable& table : config.tiers) {
    if (table.season == season.name) price += ToMicros(table.blocks.front().per_kwh);
  }
  return price;
}

RateInterval RateOfBucket(const TariffSchedule& schedule, const LocalTime& local,
                          UnixMs start_ms) {
  const LocalMoment moment = local.At(start_ms);
  const ScheduledTariff& scheduled = schedule.InForce(moment.date);
  const Tariff& tariff = scheduled.tariff;
  const RateSlot slot = tariff.At(moment.date, moment.minute_of_day);
  const Season& season = tariff.rates().seasons[slot.season];
  return {{start_ms, start_ms + kMsPerBucket}, &scheduled, season.name,
          season.prices[slot.period].period, QuotedPricePerKwh(tariff, slot)};
}

Result<std::vector<RateInterval>> RateIntervals(const TariffSchedule& schedule,
                                                const LocalTime& local, TimeRange range) {
  if (BucketStart(range.start_ms) != range.start_ms || BucketStart(range.end_ms) != range.end_ms ||
      range.end_ms <= range.start_ms) {
    return Status::InvalidArgument("the range must be non-empty, on 15-minute boundaries");
  }
  std::vector<RateInterval> intervals;
  for (UnixMs start = range.start_ms; start < range.end_ms; start += kMsPerBucket) {
    RateInterval rate = RateOfBucket(schedule, local, start);
    if (!intervals.empty() && intervals.back().SameRate(rate)) {
      intervals.back().range.end_ms = rate.range.end_ms;
    } else {
      intervals.push_back(std::move(rate));
    }
  }
  return intervals;
}

RateNow RateAt(const TariffSchedule& schedule, const LocalTime& local, UnixMs instant,
               UnixMs horizon_ms) {
  RateNow now{RateOfBucket(schedule, local, BucketStart(instant)), std::nullopt};
  const UnixMs last = instant + horizon_ms;
  for (UnixMs start = now.current.range.end_ms; start < last; start += kMsPerBucket) {
    RateInterval rate = RateOfBucket(schedule, local, start);
    if (!rate.SameRate(now.current)) {
      now.current.range.end_ms = start;
      now.next = std::move(rate);
      return now;
    }
  }
  now.current.range.end_ms = 0;
  return now;
}

}  // namespace ampledger
