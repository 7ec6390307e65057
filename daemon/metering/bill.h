// daemon/metering/bill.h
// The site bill for one billing cycle: a Tariff applied to the 15-minute buckets of the site's
// circuits. Pure; any thread may call ComputeBill.
//
// What the bill charges, in this order (config/tariffs/README.md says the same for authors):
//  1. Grid energy per bucket: the consumption loads' sum minus the export loads' sum (solar
//     behind the meter); import = the positive part, export = the negative part.
//  2. Export: none; net billing (imports at retail, exports credited at the export price);
//     or net metering, netting imports and exports per interval, per rate period or over the
//     cycle, surplus kWh banked to the next cycle and banked kWh used first.
//  3. Time-of-use energy lines (season, period), tiers per season (block sizes scaled by the
//     season's share of the cycle's days, or by days / prorate_days), per-kWh adders, fixed
//     charges, demand charges, the export credit.
//  4. A minimum-bill top-up when those lines sum below the minimum bill.
//  5. Percentage adjustments in file order, each on the running total (a rebate, then a tax).
//  6. A money credit carried in is used up to the total; a negative total is carried forward.
// Each line is rounded to the cent before summing unless the tariff says otherwise.
#pragma once

#include <string>
#include <vector>

#include "config/status.h"
#include "daemon/metering/bucket.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/money.h"
#include "daemon/metering/tariff.h"

namespace ampledger {

// One circuit's buckets (or the estimated unmetered remainder) over the cycle.
struct LoadSeries {
  std::string id;
  bool is_export = false;   // a producing circuit (solar)
  bool estimated = false;   // not measured at all (the remainder): left out of coverage
  std::vector<CircuitBucket> buckets;  // inside the cycle, on 15-minute boundaries, any order
};

struct BillInput {
  BillingCycle cycle;
  std::vector<LoadSeries> loads;
  // Per demand charge of the tariff (same order): billing demands in kW of the previous
  // cycles, most recent first; may be shorter than the ratchet needs, or empty.
  std::vector<std::vector<double>> previous_billing_kw;
  double banked_kwh = 0;       // net metering: surplus kWh carried in
  Micros carried_credit = 0;   // money credit carried in (>= 0)
  // When `cycle` is only a part of a billing cycle (the tariff changed inside it): the whole
  // cycle's days. What a tariff charges per cycle is then prorated by the part's days over
  // these: fixed charges per cycle, tier block sizes, demand charges (the part's own peak)
  // and the minimum bill. 0 = `cycle` is a whole cycle.
  int whole_cycle_days = 0;
};

enum class LineKind {
  kEnergy, kTier, kAdder, kFixed, kDemand, kExportCredit, kMinimum, kAdjustment, kCarried
};

// How a line is split among the units of a building (daemon/metering/statement.h).
enum class LineSplit {
  kByLoad,    // by `weights`, one per load: the loads' part in what the line charges
  kEqual,     // equally among the units (fixed charges, the minimum-bill top-up)
  kByAmount,  // in proportion to what each unit owes so far (adjustments, credits)
};

struct BillLine {
  LineKind kind = LineKind::kEnergy;
  std::string description;  // "Energy, on-peak (summer)"
  double quantity = 0;
  std::string unit;         // "kWh", "kW", "day", "cycle", "%"
  Micros unit_price = 0;    // per unit; for "%" lines the percent x 10^6
  Micros amount = 0;        // rounded as the tariff says; negative only for a credit
  LineSplit split = LineSplit::kByLoad;
  std::vector<double> weights;  // kByLoad: one per BillInput::loads entry, >= 0
  bool IsCredit() const {
    return kind == LineKind::kExportCredit || kind == LineKind::kAdjustment ||
           kind == LineKind::kCarried;
  }
};

struct Bill {
  BillingCycle cycle;
  int days = 0;
  double hours = 0;
  std::vector<BillLine> lines;
  Micros total = 0;             // to the cent; never negative (a surplus is carried)
  Micros credit_carried_out = 0;
  double banked_kwh_out = 0;
  double load_kwh = 0;          // consumption loads, gross
  double import_kwh = 0;        // from the grid
  double export_kwh = 0;        // to the grid
  double billed_kwh = 0;        // after netting and banked kWh
  std::vector<double> billing_demand_kw;  // per demand charge: keep for future ratchets
  double power_factor = 0;      // real / apparent energy of the loads; 0 = not known
  // Measured time / cycle time, averaged over the measured loads (1 = no gap).
  double coverage = 0;
  double estimated_fraction = 0;  // of load kWh from buckets of quality kEstimated (or loads)
  bool each_line_rounded = true;
};

// InvalidArgument when a bucket lies outside the cycle or off a 15-minute boundary, or the
// cycle's bounds are not on bucket boundaries.
Result<Bill> ComputeBill(const Tariff& tariff, const LocalTime& local, const BillInput& input);

}  // namespace ampledger
