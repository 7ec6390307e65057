// storage/rollup_recompute.h
// Rollups computed from raw readings alone: the definition the writer's incremental rollups
// must equal, the repair for buckets touched by late readings, and crash recovery for
// buckets whose rows lag. Reads only; callable on any connection by its owning thread.
#pragma once

#include <map>
#include <vector>

#include "daemon/metering/bucket.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {

// Per bucket start, one ChannelBucket per flat channel index (empty for channels that fed no
// circuit or had no data). Buckets with no data at all are absent.
using ChannelBuckets = std::map<UnixMs, std::vector<ChannelBucket>>;

// Recomputes the channel buckets of [from_ms, to_ms) (bucket starts, multiples of
// kMsPerBucket) from the raw readings: each reading's energy (IntervalEnergy with its
// channel's previous reading) spread over the buckets. Reads the readings of
// [from_ms - max_gap_ms, to_ms + max_gap_ms): no span is longer than max_gap_ms.
Result<ChannelBuckets> RecomputeChannelBuckets(const Database& db, const SeriesMap& series,
                                               UnixMs from_ms, UnixMs to_ms, UnixMs max_gap_ms);

// The circuit's bucket from its channels' buckets (absent channels count as unmeasured).
CircuitBucket CircuitBucketOf(const SeriesMap& series, int circuit_index, UnixMs start_ms,
                              const std::vector<ChannelBucket>& channels);

// The circuit's buckets over [from_ms, to_ms) computed from raw readings, in time order,
// only buckets with data. For checks against the stored rollups.
Result<std::vector<CircuitBucket>> RecomputeCircuitBuckets(const Database& db,
                                                           const SeriesMap& series,
                                                           int circuit_index, UnixMs from_ms,
                                                           UnixMs to_ms, UnixMs max_gap_ms);

}  // namespace ampledger
