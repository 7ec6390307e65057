// daemon/metering/reconciliation.h
// Reconciliation of the submeters against the site's main (utility) meter, period by period
// (local days, or billing cycles): what the main meter counted, what the consumption
// circuits measured, the unmetered remainder (main meter minus submetered), and the
// calibration ratio (submetered / main meter: 1 when every load is submetered and the sensors
// agree with the utility's meter; below 1 for unmetered loads or sensors reading low). The
// statements bill the same remainder (statement.h). Pure; any thread.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "daemon/metering/bucket.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/main_meter.h"
#include "daemon/metering/meter_interval.h"

namespace ampledger {

struct ReconciliationRow {
  TimeRange period;
  double submetered_kwh = 0;  // consumption circuits, summed
  double exported_kwh = 0;    // export circuits (solar), apart: the main meter may net them
  double coverage = 0;        // measured fraction of the period, mean over consumption circuits
  std::optional<double> main_meter_kwh;
  std::string main_meter_basis;  // how main_meter_kwh was found, or why it is not known
  std::optional<double> remainder_kwh;  // main meter - submetered
  std::optional<double> ratio;          // submetered / main meter; absent when main is 0
};

// One row per period of `periods` (consecutive, on 15-minute bucket boundaries).
// `consumption` and `exported` hold each circuit's buckets (any order); buckets outside every
// period are ignored; a bucket with no row counts as unmeasured. The main meter's energy is
// MainMeterEnergyFromAll over each period.
std::vector<ReconciliationRow> Reconcile(
    const std::vector<TimeRange>& periods,
    const std::vector<std::vector<CircuitBucket>>& consumption,
    const std::vector<std::vector<CircuitBucket>>& exported,
    const std::vector<MeterInterval>& intervals, const std::vector<MainMeterRead>& reads);

}  // namespace ampledger
