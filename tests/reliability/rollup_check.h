// tests/reliability/rollup_check.h
// The check every fault tool ends with: the stored 15-minute rollups of every circuit equal a
// recomputation from the raw readings (storage/rollup_recompute.h), bucket by bucket.
#pragma once

#include <algorithm>
#include <cmath>

#include "config/config.h"
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

}  // namespace ampledger::reliability
