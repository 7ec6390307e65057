// api/energy_cost.cpp
#include "api/energy_cost.h"

#include <map>

namespace ampledger {

std::vector<BucketEnergy> ConsumptionBuckets(
    const Config& config, const std::vector<int>& circuits,
    const std::vector<std::vector<CircuitBucket>>& buckets) {
  std::map<UnixMs, double> kwh;
  for (size_t k = 0; k < circuits.size(); ++k) {
    if (config.circuits[circuits[k]].direction == Direction::kExport) continue;
    for (const CircuitBucket& bucket : buckets[k]) kwh[bucket.start_ms] += bucket.real_wh / 1000;
  }
  std::vector<BucketEnergy> out;
  out.reserve(kwh.size());
  for (const auto& [start, energy] : kwh) out.push_back({start, energy});
  return out;
}

Result<EnergyCost> PriceBuckets(const TariffSchedule& schedule, const LocalTime& local,
                                const std::vector<BucketEnergy>& buckets) {
  Result<std::vector<ScheduledCharges>> charges = schedule.PriceEnergy(local, buckets);
  if (!charges.ok()) return charges.status();
  EnergyCost total;
  for (const ScheduledCharges& part : *charges) {
    for (const EnergyCharge& line : part.lines) {
      total.kwh += line.kwh;
      total.cost += line.amount;
      PeriodCost* slot = nullptr;
      for (PeriodCost& period : total.periods) {
        if (period.period == line.period) slot = &period;
      }
      if (slot == nullptr) slot = &total.periods.emplace_back(PeriodCost{line.period});
      slot->kwh += line.kwh;
      slot->cost += line.amount;
    }
  }
  return total;
}

}  // namespace ampledger
