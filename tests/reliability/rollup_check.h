// tests/reliability/rollup_check.h
// The check every fault tool ends with: the stored 15-minute rollups of every circuit equal a
// recomputation from the raw readings (storage/rollup_recompute.h), bucket by bucket, and so
// do the daily rollups (storage/daily_rollup.h), local day by local day.
#pragma once

#include <algorithm>
#include <cmath>

#include "config/config.h"
#include "daemon/metering/local_time.h"
#include "storage/daily_rollup.h"
#include "storage/database.h"
#include "storage/queries.h"
#include "storage/rollup_recompute.h"
#include "storage/series.h"

namespace ampledger::reliability {

// Buckets compared, and how many differ (or could not be read).
struct RollupCheck {
  int buckets = 0;
  int mismatches = 0;
};

// Sums taken in another order differ in the last bits only.
inline bool Near(double a, double b) {
  return std::fabs(a - b) <= 1e-9 * std::max(1.0, std::fabs(b));
}

// Compares the buckets starting in [from_ms, to_ms). Opens the database for writing
// (RegisterSeries needs it): call it once the daemon has stopped.
inline RollupCheck CompareRollups(const Config& config, UnixMs from_ms, UnixMs to_ms) {
  RollupCheck check;
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  if (!db.ok()) return {0, 1};
  Result<SeriesMap> series = RegisterSeries(**db, config);
  if (!series.ok()) return {0, 1};
  const UnixMs max_gap_ms = static_cast<UnixMs>(config.site.max_gap_seconds * 1000);
  for (int circuit = 0; circuit < series->CircuitCount(); ++circuit) {
    auto stored = ReadCircuitBuckets(**db, *series, circuit, from_ms, to_ms);
    auto fresh = RecomputeCircuitBuckets(**db, *series, circuit, from_ms, to_ms, max_gap_ms);
    if (!stored.ok() || !fresh.ok() || stored->size() != fresh->size()) {
      ++check.mismatches;
      continue;
    }
    for (std::size_t i = 0; i < fresh->size(); ++i) {
      const CircuitBucket& s = stored->at(i);
      const CircuitBucket& f = fresh->at(i);
      ++check.buckets;
      if (s.start_ms != f.start_ms || !Near(s.real_wh, f.real_wh) ||
          !Near(s.apparent_vah, f.apparent_vah) || !Near(s.coverage, f.coverage) ||
          s.quality != f.quality) {
        ++check.mismatches;
      }
    }
  }
  return check;
}

// Compares each circuit's daily rollup rows of the whole local days of `zone` that overlap
// [from_ms, to_ms) with the recomputed buckets of each day summed as SumIntoPeriods sums them
// (energy, least/greatest power, summed coverage, worst quality). Read through
// ReadDaysAndBucketsForCircuits, so the API's read path is checked with the table.
inline RollupCheck CompareDailyRollups(const Database& db, const SeriesMap& series,
                                       const LocalTime& zone, UnixMs from_ms, UnixMs to_ms,
                                       UnixMs max_gap_ms) {
  RollupCheck check;
  Result<TimeRange> first = zone.Day(zone.At(from_ms).date);
  Result<TimeRange> last = zone.Day(zone.At(to_ms - 1).date);
  if (!first.ok() || !last.ok()) return {0, 1};
  std::vector<TimeRange> days;
  for (date::sys_days d{zone.At(first->start_ms).date}; ; d += date::days(1)) {
    Result<TimeRange> day = zone.Day(date::year_month_day{d});
    if (!day.ok()) return {0, 1};
    days.push_back(*day);
    if (day->end_ms >= last->end_ms) break;
  }
  std::vector<int> circuits;
  for (int c = 0; c < series.CircuitCount(); ++c) circuits.push_back(c);
  auto stored = ReadDaysAndBucketsForCircuits(db, series, zone, circuits, days.front().start_ms,
                                              days.back().end_ms);
  if (!stored.ok()) return {0, 1};
  for (int circuit : circuits) {
    std::size_t next = 0;  // the next stored day row of this circuit
    for (const TimeRange& day : days) {
      auto fresh = RecomputeCircuitBuckets(db, series, circuit, day.start_ms, day.end_ms, max_gap_ms);
      if (!fresh.ok()) return {0, 1};
      if (fresh->empty()) continue;  // no data, no row
      CircuitBucket sum{day.start_ms, 0, 0, fresh->front().min_watts, fresh->front().max_watts,
                        0, Quality::kMeasured};
      for (const CircuitBucket& b : *fresh) {
        sum.real_wh += b.real_wh;
        sum.apparent_vah += b.apparent_vah;
        sum.min_watts = std::min(sum.min_watts, b.min_watts);
        sum.max_watts = std::max(sum.max_watts, b.max_watts);
        sum.coverage += b.coverage;
        sum.quality = Worse(sum.quality, b.quality);
      }
      ++check.buckets;
      const std::vector<CircuitBucket>& rows = (*stored)[circuit];
      if (next >= rows.size()) {
        ++check.mismatches;
        continue;
      }
      const CircuitBucket& s = rows[next++];
      if (s.start_ms != sum.start_ms || !Near(s.real_wh, sum.real_wh) ||
          !Near(s.apparent_vah, sum.apparent_vah) || !Near(s.min_watts, sum.min_watts) ||
          !Near(s.max_watts, sum.max_watts) || !Near(s.coverage, sum.coverage) ||
          s.quality != sum.quality) {
        ++check.mismatches;
      }
    }
    check.mismatches += static_cast<int>((*stored)[circuit].size() - next);  // rows too many
  }
  return check;
}

// The same with the config's zone and gap, opening the database (as CompareRollups does).
inline RollupCheck CompareDailyRollups(const Config& config, UnixMs from_ms, UnixMs to_ms) {
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  if (!db.ok()) return {0, 1};
  Result<SeriesMap> series = RegisterSeries(**db, config);
  Result<LocalTime> zone = LocalTime::ForZone(config.site.time_zone);
  if (!series.ok() || !zone.ok()) return {0, 1};
  return CompareDailyRollups(**db, *series, *zone, from_ms, to_ms,
                             static_cast<UnixMs>(config.site.max_gap_seconds * 1000));
}

}  // namespace ampledger::reliability
