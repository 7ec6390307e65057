// storage/cycle_query.cpp
#include "storage/cycle_query.h"

#include "storage/main_meter_intervals.h"
#include "storage/main_meter_store.h"
#include "storage/queries.h"

namespace ampledger {

Result<CycleStatements> QueryCycleStatements(const Database& db, const SeriesMap& series,
                                             const Config& config, const TariffSchedule& schedule,
                                             const LocalTime& local, date::year_month month) {
  if (schedule.empty()) {
    return Status::InvalidArgument("the site has no tariff (site.tariff in the config)");
  }
  Result<BillingCycle> cycle = local.CycleStarting(config.site.billing_cycle_day, month);
  if (!cycle.ok()) return cycle.status();
  std::vector<int> indexes;
  for (int k = 0; k < series.CircuitCount(); ++k) indexes.push_back(k);
  Result<std::vector<std::vector<CircuitBucket>>> buckets = ReadBucketsForCircuits(
      db, series, indexes, cycle->range.start_ms, cycle->range.end_ms);
  if (!buckets.ok()) return buckets.status();
  std::vector<CircuitSeries> circuits;
  for (int k = 0; k < series.CircuitCount(); ++k) {
    circuits.push_back({config.circuits[k].id, std::move((*buckets)[k])});
  }
  Result<std::vector<MainMeterRead>> reads = ListMainMeterReads(db);
  if (!reads.ok()) return reads.status();
  Result<std::vector<MeterInterval>> intervals = ReadMainMeterIntervals(db, cycle->range);
  if (!intervals.ok()) return intervals.status();
  return ComputeCycleStatements(config, schedule, local, *cycle, circuits, *reads, CycleReads{},
                                *intervals);
}

}  // namespace ampledger
