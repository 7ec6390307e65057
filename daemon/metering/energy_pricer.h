// daemon/metering/energy_pricer.h
// EnergyPricer: what a span of energy costs at the site's time-of-use energy rates, for the
// alert rules (cost budgets, the cost of a finished cycle). The energy of a span [start, end)
// is spread evenly over the 15-minute UTC buckets it overlaps (constant mean power, as the
// rollups spread it, daemon/metering/bucket.h), and each part is priced at the per-kWh price
// of its bucket's rate period under the tariff in force on the bucket's local date
// (TariffSchedule::InForce): the price TariffSchedule::PriceEnergy gives that bucket, so a
// budget and a cost figure computed from the rollups agree.
//
// Only the time-of-use energy charge is counted. It is the part of a bill that grows with each
// kWh and depends on when it is used, which is what a person watching a budget can change (run
// the dryer off-peak), and it is known exactly as each reading arrives. The rest of a bill is
// not a price of the energy in hand: fixed charges accrue whatever is used (prorated into a
// day they would only shift every budget by a constant); tier blocks depend on the whole
// cycle's energy, demand charges on its highest interval, a minimum bill and percentage
// adjustments (taxes, rebates) on its total; and per-kWh adders are priced on the billed
// (possibly net) energy of the cycle. A budget therefore watches the energy-charge part of the
// bill, and says so (config/README.md).
//
// Pure: no I/O. Not thread-safe (it remembers the last bucket's price); one per owner thread.
#pragma once

#include "daemon/metering/local_time.h"
#include "daemon/metering/reading.h"
#include "daemon/metering/tariff_schedule.h"

namespace ampledger {

class EnergyPricer {
 public:
  // `schedule` must outlive this. Precondition: !schedule.empty().
  EnergyPricer(const TariffSchedule& schedule, LocalTime local);

  // What `wh` used at a constant rate over [start_ms, end_ms) costs, in the tariff's currency.
  // A span with no duration is priced whole at the bucket holding start_ms.
  double Cost(UnixMs start_ms, UnixMs end_ms, double wh);

  // The price of one kWh used in the 15-minute bucket that starts at `bucket_start_ms`.
  double PricePerKwh(UnixMs bucket_start_ms);

 private:
  const TariffSchedule* schedule_;
  LocalTime local_;
  UnixMs cached_bucket_ms_ = -1;  // a bucket start is never -1 (it is a multiple of 900000)
  double cached_price_ = 0;
};

}  // namespace ampledger
