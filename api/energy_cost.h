// api/energy_cost.h
// The time-of-use energy charge of stored buckets, for the routes that show cost: each
// 15-minute bucket priced by the tariff in force on its local date (TariffSchedule::PriceEnergy).
// Energy lines only: per-kWh adders, tiers, fixed and demand charges and adjustments (taxes)
// belong to the bill. Pure functions; any thread.
#pragma once

#include <string>
#include <vector>

#include "config/config.h"
#include "config/status.h"
#include "daemon/metering/bucket.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/tariff_schedule.h"

namespace ampledger {

// The consumption energy of `circuits` (indexes into Config::circuits, parallel to
// `buckets`), added bucket by bucket, in time order; export circuits are left out.
std::vector<BucketEnergy> ConsumptionBuckets(const Config& config, const std::vector<int>& circuits,
                                             const std::vector<std::vector<CircuitBucket>>& buckets);

// One rate period's energy and charge, summed over seasons and tariffs.
struct PeriodCost {
  std::string period;
  double kwh = 0;
  double cost = 0;  // not rounded: a bill rounds its own lines
};

struct EnergyCost {
  double kwh = 0;
  double cost = 0;
  std::vector<PeriodCost> periods;  // by first appearance in the schedule's lines
};

// Prices `buckets`. Precondition: !schedule.empty(). Errors as TariffSchedule::PriceEnergy.
Result<EnergyCost> PriceBuckets(const TariffSchedule& schedule, const LocalTime& local,
                                const std::vector<BucketEnergy>& buckets);

}  // namespace ampledger
