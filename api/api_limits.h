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
// is one row per circuit per local day of the range plus the quarter hours of its partial
// first and last days (at most about 590 rows per circuit; storage/daily_rollup.h).
inline constexpr UnixMs kMaxEnergyRangeMs = 400 * 86400 * kMsPerSecond;

// The longest range one ESPI usage export covers (api/usage_export.h): a year and a month of
// 15-minute readings is about 38,000 IntervalReadings, some 7 MB of XML.
inline constexpr UnixMs kMaxUsageExportRangeMs = 400 * 86400 * kMsPerSecond;

// Live values come from readings ending within this long before now; older ones are stale.
inline constexpr UnixMs kLiveHorizonMs = 3600 * kMsPerSecond;

// Events in one /v1/events response: a script catching up after a day away gets them in a few
// requests, and one response stays well under a megabyte of JSON.
inline constexpr int kMaxEventsPerResponse = 1000;
inline constexpr int kDefaultEventsPerResponse = 100;

// The longest a long-poll may wait (the `wait` parameter, seconds): below the idle timeouts
// of common proxies and HTTP clients (60 s and more, common practice).
inline constexpr int kMaxEventWaitSeconds = 60;

// Long-polls waiting at once, as a share of the HTTP worker threads: each holds a worker while
// it waits, so at most half of them may, and the other routes always have workers left.
inline int MaxEventWaiters(int http_threads) { return http_threads >= 2 ? http_threads / 2 : 1; }

// Retry-After (seconds) of the 503 beyond that cap.
inline constexpr int kEventWaitRetryAfterSeconds = 5;

// Connections served at once (api/connection_pool.h): each holds a thread while it is open,
// idle or slow, so this many hostile connections from one client are needed before a
// well-behaved one waits. An idle thread costs little (the stack pages it touched, tens of KiB),
// so 256 of them stay far below the daemon's memory target.
inline constexpr int kMaxHttpConnectionThreads = 256;

// The longest range /v1/tariff/periods describes: a month of a chart, at most 2976 quarter
// hours to evaluate and, for a time-of-use tariff, a few hundred intervals to send.
inline constexpr UnixMs kMaxTariffPeriodsRangeMs = 31 * 86400 * kMsPerSecond;

// How far /v1/tariff/now looks for the next change of rate: a year and a day, so a seasonal
// change is found from any day of the year; a tariff with one rate all year has none.
inline constexpr UnixMs kRateChangeHorizonMs = 366 * 86400 * kMsPerSecond;

// The longest range of main-meter reads one request lists: reads come a few a month, so ten
// years is a few hundred rows.
inline constexpr UnixMs kMaxMeterReadRangeMs = 3660LL * 86400 * kMsPerSecond;

// The longest silence one request may set: 30 days.
inline constexpr double kMaxSilenceSeconds = 30 * 86400;

}  // namespace ampledger
