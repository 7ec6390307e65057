// daemon/metering/cycle_statements.h
// A billing cycle's site bill and unit statements under the tariff schedule, with the main
// meter's energy taken from its reads: what the `statement` command and the API compute.
// Pure; any thread may call it.
//
// A cycle with no tariff change inside is ComputeStatements (daemon/metering/statement.h) under
// the tariff in force on its first day. A cycle that a change falls inside is cut at the
// change (local midnight of its date) into parts; each part is billed on its own buckets
// under its own tariff, with per-cycle charges prorated by its days (BillInput::whole_cycle_days),
// each part's net-metering bank and money credit carried into the next part, and the main
// meter's energy for each part's span. The parts' lines are then listed together, each line
// marked with the dates of its part ("[2026-05-05 to 2026-05-31]"); totals and energies add
// up. Each part's statements add up to its bill to the cent, so the cycle's do too.
#pragma once

#include <vector>

#include "config/config.h"
#include "daemon/metering/main_meter.h"
#include "daemon/metering/meter_interval.h"
#include "daemon/metering/statement.h"
#include "daemon/metering/tariff_schedule.h"

namespace ampledger {

// `carried` gives the previous billing demands, banked kWh and carried credit (its
// main_meter_kwh is ignored: the main meter's energy comes from `meter_intervals` when they
// cover the cycle (or a part of it), else from `meter_reads` (MainMeterEnergyFromAll); when
// neither covers it the remainder is not billed and main_meter_basis says why).
// InvalidArgument when the schedule is empty, or as ComputeStatements.
Result<CycleStatements> ComputeCycleStatements(const Config& config,
                                               const TariffSchedule& schedule,
                                               const LocalTime& local, const BillingCycle& cycle,
                                               const std::vector<CircuitSeries>& circuits,
                                               const std::vector<MainMeterRead>& meter_reads,
                                               const CycleReads& carried,
                                               const std::vector<MeterInterval>& meter_intervals = {});

}  // namespace ampledger
