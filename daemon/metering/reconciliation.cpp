// daemon/metering/reconciliation.cpp
#include "daemon/metering/reconciliation.h"

#include <algorithm>

namespace ampledger {
namespace {

// The index of the period holding `t`, or -1.
int PeriodOf(const std::vector<TimeRange>& periods, UnixMs t) {
  auto after = std::upper_bound(periods.begin(), periods.end(), t,
                                [](UnixMs at, const TimeRange& p) { return at < p.end_ms; });
  if (after == periods.end() || t < after->start_ms) return -1;
  return static_cast<int>(after - periods.begin());
}

}  // namespace

std::vector<ReconciliationRow> Reconcile(
    const std::vector<TimeRange>& periods,
    const std::vector<std::vector<CircuitBucket>>& consumption,
    const std::vector<std::vector<CircuitBucket>>& exported,
    const std::vector<MeterInterval>& intervals, const std::vector<MainMeterRead>& reads) {
  std::vector<ReconciliationRow> rows(periods.size());
  std::vector<double> measured_ms(periods.size(), 0);
  for (size_t i = 0; i < periods.size(); ++i) rows[i].period = periods[i];
  for (const std::vector<CircuitBucket>& circuit : consumption) {
    for (const CircuitBucket& bucket : circuit) {
      const int p = PeriodOf(periods, bucket.start_ms);
      if (p < 0) continue;
      rows[p].submetered_kwh += bucket.real_wh / 1000;
      measured_ms[p] += bucket.coverage * static_cast<double>(kMsPerBucket);
    }
  }
  for (const std::vector<CircuitBucket>& circuit : exported) {
    for (const CircuitBucket& bucket : circuit) {
      const int p = PeriodOf(periods, bucket.start_ms);
      if (p >= 0) rows[p].exported_kwh += bucket.real_wh / 1000;
    }
  }
  for (size_t i = 0; i < rows.size(); ++i) {
    ReconciliationRow& row = rows[i];
    if (!consumption.empty()) {
      row.coverage = measured_ms[i] / static_cast<double>(row.period.DurationMs()) /
                     static_cast<double>(consumption.size());
    }
    Result<MeterEnergy> main = MainMeterEnergyFromAll(intervals, reads, row.period);
    if (!main.ok()) {
      row.main_meter_basis = main.status().message();
      continue;
    }
    row.main_meter_kwh = main->kwh;
    row.main_meter_basis = main->basis;
    row.remainder_kwh = main->kwh - row.submetered_kwh;
    if (main->kwh > 0) row.ratio = row.submetered_kwh / main->kwh;
  }
  return rows;
}

}  // namespace ampledger
