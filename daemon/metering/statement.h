// daemon/metering/statement.h
// A cycle's site bill and one statement per unit of a building, from the site config, its
// tariff and the circuits' 15-minute buckets. Pure; any thread may call ComputeStatements.
//
// Billing tenants for energy is regulated in many places (some forbid it, some require a
// utility's own meter, some cap what may be charged). These statements allocate a bill the
// landlord has received; they are not a bill under any law. Check local law first.
//
// How the site bill is split (every site line is split on its own, then summed per unit):
//  - energy, tier, adder, demand and export-credit lines: in proportion to each load's part in
//    what the line charges (its kWh in that rate period or season, or in the demand peak
//    interval); a unit's own circuits go to it, a shared circuit and the unmetered remainder go
//    to units by their ShareConfig (equal, fixed weights, or proportional to own use);
//  - fixed charges and the minimum-bill top-up: equally among the units;
//  - percentage adjustments and carried credits: in proportion to what each unit owes so far;
//  - circuits of no unit and shared by none go to a statement with an empty unit id (the
//    owner's part), shown only when it is not empty.
// Each line is split to the cent (to the micro-unit when the tariff rounds only totals) by
// the largest-remainder method (daemon/metering/shares.h), so the statements add up to the
// site bill exactly; the unit listed first in the config gets a tied cent first. When the
// tariff rounds only totals, each statement's total is rounded to the cent by the same method
// and a "Rounding to the cent" line shows the difference from its micro-unit lines.
//
// Main meter. Given the main meter's kWh for the cycle (typed in), the unmetered remainder is
// main meter - grid import computed from the submetered circuits (all consumption circuits
// minus export circuits, per interval). When positive and the config has a [remainder] split,
// it is billed as a load of the same shape as the submetered import (nothing better is known)
// and marked estimated. The ratio submetered / main meter is reported either way.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "config/config.h"
#include "daemon/metering/bill.h"

namespace ampledger {

inline constexpr const char* kTenantBillingNotice =
    "Billing tenants for energy is regulated in many places. This statement allocates the "
    "building's utility bill by submeter readings; it is not a utility bill. Local law "
    "decides whether and how energy may be charged to tenants.";

// One circuit's buckets over the cycle (from storage).
struct CircuitSeries {
  std::string circuit;  // a circuit id of the config
  std::vector<CircuitBucket> buckets;
};

// What the caller knows beyond the buckets.
struct CycleReads {
  std::optional<double> main_meter_kwh;  // the utility meter's kWh for the cycle, typed in
  std::vector<std::vector<double>> previous_billing_kw;  // as BillInput
  double banked_kwh = 0;
  Micros carried_credit = 0;
  int whole_cycle_days = 0;  // as BillInput: set when the cycle given is a part of one
};

enum class StatementSection {
  kOwn,        // the unit's own circuits
  kShared,     // one line per shared circuit
  kRemainder,  // the unit's share of the unmetered remainder
  kCommon,     // fixed charges, minimum top-up, adjustments, credits
};

struct StatementLine {
  StatementSection section = StatementSection::kOwn;
  std::string description;
  std::string method;     // how the share was found: "equal split among 2 units", ...
  double quantity = 0;
  std::string unit;       // "kWh", "kW", "day", "cycle", "%"
  Micros unit_price = 0;  // 0 on shared and remainder lines (several prices)
  Micros amount = 0;
};

struct UnitStatement {
  std::string unit_id;  // "" = circuits of no unit
  std::string unit_name;
  std::vector<StatementLine> lines;
  Micros total = 0;
  double own_kwh = 0;
  double shared_kwh = 0;  // of shared circuits and the remainder
};

// Which tariff priced which days of the cycle (more than one when the tariff changed in it).
struct TariffSpan {
  std::string name;   // library name
  std::string title;  // the tariff file's `name`
  date::year_month_day first_day;
  date::year_month_day last_day;  // inclusive
};

struct CycleStatements {
  Bill site;
  std::vector<TariffSpan> tariffs;  // filled by ComputeCycleStatements; empty otherwise
  std::vector<UnitStatement> units;  // config order; then the owner's part if not empty
  double submetered_import_kwh = 0;
  std::optional<double> main_meter_kwh;
  std::string main_meter_basis;  // how main_meter_kwh was found, or why it is not known
  std::optional<double> submetered_ratio;  // submetered import / main meter
  double remainder_kwh = 0;                // billed as the remainder (0 when not billed)
  std::string notice = kTenantBillingNotice;
};

// InvalidArgument when a series names no circuit of `config`, or as ComputeBill.
Result<CycleStatements> ComputeStatements(const Config& config, const Tariff& tariff,
                                          const LocalTime& local, const BillingCycle& cycle,
                                          const std::vector<CircuitSeries>& circuits,
                                          const CycleReads& reads);

}  // namespace ampledger
