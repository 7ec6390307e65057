// storage/queries.h
// Read-only queries for the API, each a prepared statement on a reader connection
// (Database::OpenReader). A connection serves one thread at a time: give each API thread its
// own, or open one per query. Results reflect the last commit; rollup buckets that are still
// open lag the raw readings by at most WriterOptions::open_bucket_flush_ms.
#pragma once

#include <cstdint>
#include <vector>

#include "daemon/metering/bucket.h"
#include "daemon/metering/reading.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {

// The circuit's stored buckets with start in [from_ms, to_ms), in time order. A bucket with
// no row had no data (coverage 0). Precondition: 0 <= circuit_index < series.CircuitCount().
Result<std::vector<CircuitBucket>> ReadCircuitBuckets(const Database& db, const SeriesMap& series,
                                                      int circuit_index, UnixMs from_ms,
                                                      UnixMs to_ms);

// The same for several circuits in one read transaction (one consistent snapshot); the
// result is parallel to `circuit_indexes`.
Result<std::vector<std::vector<CircuitBucket>>> ReadBucketsForCircuits(
    const Database& db, const SeriesMap& series, const std::vector<int>& circuit_indexes,
    UnixMs from_ms, UnixMs to_ms);

// Appends the rows `select` gives for one circuit and [from_ms, to_ms) to `out`. `select` takes
// ?1 circuit id, ?2 from, ?3 to and yields start, real_wh, apparent_vah, min_w, max_w,
// coverage, quality (the shape of `rollup` and of `rollup_day`); it is reset after.
Status AppendRollupRows(Statement& select, std::int64_t circuit_id, UnixMs from_ms, UnixMs to_ms,
                        std::vector<CircuitBucket>* out);

// The channel's raw readings ending in [from_ms, to_ms), in time order, at most `limit`.
// The table is keyed (time, channel), so this reads every channel's rows in the range:
// cost grows with the range times the number of channels.
Result<std::vector<ChannelReading>> ReadChannelReadings(const Database& db,
                                                        const SeriesMap& series,
                                                        int channel_index, UnixMs from_ms,
                                                        UnixMs to_ms, int limit);

// Each configured channel's newest reading ending at or after `since_ms` (channels with none
// are absent), by flat channel index. Reads backwards from the newest row and stops when
// every channel is found or `since_ms` is reached, so `since_ms` bounds the work.
Result<std::vector<ChannelReading>> ReadLatestReadings(const Database& db,
                                                       const SeriesMap& series, UnixMs since_ms);

}  // namespace ampledger
