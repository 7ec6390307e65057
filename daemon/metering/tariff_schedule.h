// daemon/metering/tariff_schedule.h
// Which tariff is in force on which day: the site's tariff, then each dated change of
// [[site.tariff_change]] from local midnight of its date on, so earlier days keep the prices
// they had. Built once (at start-up, or by a command) from a loaded Config; immutable after
// Create(), so any thread may call it.
//
// A billing cycle that a change falls inside is split at the change into parts, each billed
// under its own tariff (daemon/metering/cycle_statements.h): energy is priced by the tariff
// of the day it was used, and what a tariff charges per cycle is prorated by the part's share
// of the cycle's days (BillInput::whole_cycle_days). Prorating by days when prices change
// inside a billing period is how utilities commonly bill such a period (common practice; no
// single published rule: check the utility's own terms).
#pragma once

#include <span>
#include <string>
#include <vector>

#include <date/date.h>

#include "config/config.h"
#include "config/status.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/tariff.h"

namespace ampledger {

struct ScheduledTariff {
  date::year_month_day from;  // first local day in force; the site's first tariff: year::min()
  std::string name;           // the library name (file name without .toml)
  std::string path;           // the tariff file, for messages
  Tariff tariff;
};

// A part of a billing cycle under one tariff.
struct CyclePart {
  BillingCycle span;  // first_day .. next_first_day of the part, with its UTC range
  const ScheduledTariff* tariff = nullptr;  // owned by the schedule
};

// The energy charge of buckets priced under one tariff of the schedule.
struct ScheduledCharges {
  const ScheduledTariff* tariff = nullptr;  // owned by the schedule
  std::vector<EnergyCharge> lines;          // as Tariff::PriceEnergy
};

class TariffSchedule {
 public:
  // An empty schedule: the site has no tariff.
  TariffSchedule() = default;

  // Builds every tariff the config names (Tariff::Create). An error names the tariff file:
  //   "/etc/ampledger/tariffs/flat.toml: 02-29 is in no season"
  // A config without site.tariff gives an empty schedule.
  static Result<TariffSchedule> Create(const Config& config);

  bool empty() const { return entries_.empty(); }
  const std::vector<ScheduledTariff>& entries() const { return entries_; }

  // The tariff in force on local date `day`. Precondition: !empty().
  const ScheduledTariff& InForce(date::year_month_day day) const;

  // `cycle` cut at every change inside it, in time order; one part when none falls inside.
  // Precondition: !empty(). InvalidArgument when a day's bounds cannot be found in the zone.
  Result<std::vector<CyclePart>> Split(const LocalTime& local, const BillingCycle& cycle) const;

  // The time-of-use energy charge of `buckets` (any span, e.g. "what did this circuit cost
  // this week"), each bucket priced by the tariff in force on its local date: one entry per
  // tariff that priced any bucket, in schedule order. Energy lines only: fixed, demand and
  // per-cycle charges belong to a bill. Precondition: !empty(). Errors as Tariff::PriceEnergy.
  Result<std::vector<ScheduledCharges>> PriceEnergy(const LocalTime& local,
                                                    std::span<const BucketEnergy> buckets) const;

 private:
  std::vector<ScheduledTariff> entries_;  // in increasing `from`
};

}  // namespace ampledger
