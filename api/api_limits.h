// api/api_limits.h
// The API's limits on what one request may ask for, each with its reason.
#pragma once

#include "daemon/metering/reading.h"

namespace ampledger {

// Points (periods or raw readings) in one series response. 10000 covers a 31-day month of
// 15-minute buckets (2976), a year of hours (8784) and decades of days, while keeping one
// response below about 2 MB of JSON and one request's work to a few milliseconds of SQLite.
inline constexpr int kMaxSeriesPoints = 10000;

// Raw readings are read from the table keyed (time, channel), so a query's cost grows with
// the range times every channel's rows (storage/queries.h): raw ranges are kept short.
inline constexpr UnixMs kMaxRawRangeMs = 2 * 86400 * kMsPerSecond;

// The longest range /v1/energy sums: any 12 billing cycles or calendar year fits. Its work
// is one row per circuit per quarter hour of the range (about 38,000 rows per circuit).
inline constexpr UnixMs kMaxEnergyRangeMs = 400 * 86400 * kMsPerSecond;

// Live values come from readings ending within this long before now; older ones are stale.
inline constexpr UnixMs kLiveHorizonMs = 3600 * kMsPerSecond;

}  // namespace ampledger
