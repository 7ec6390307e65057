// api/energy_series.h
// The arithmetic behind the series routes: the periods a step divides a range into, in the
// site's local time, and the 15-minute rollup buckets summed into those periods. Local hours,
// days and months are made of whole buckets (daemon/metering/bucket.h), so the sums are exact.
// Pure functions over plain values; any thread.
#pragma once

#include <string_view>
#include <vector>

#include "config/status.h"
#include "daemon/metering/bucket.h"
#include "daemon/metering/local_time.h"

namespace ampledger {

enum class SeriesStep { kRaw, kQuarterHour, kHour, kDay, kMonth };

// "raw", "15m", "hour", "day" or "month"; InvalidArgument naming the parameter otherwise.
Result<SeriesStep> ParseSeriesStep(std::string_view text);
const char* SeriesStepName(SeriesStep step);

// The consecutive periods of `step` (not kRaw) that tile [from_ms, to_ms) in `zone`: 15-minute
// UTC buckets, or local hours, days or months. InvalidArgument, naming the query parameter,
// when `from`/`to` is not a boundary of the step in the zone, when to <= from, or when there
// would be more than `max_points` periods (the message asks for a coarser step).
Result<std::vector<TimeRange>> SeriesPeriods(const LocalTime& zone, SeriesStep step,
                                             UnixMs from_ms, UnixMs to_ms, int max_points);

// One period's energy over one circuit or the sum of several.
struct SeriesPoint {
  TimeRange period;
  double real_wh = 0;
  double apparent_vah = 0;
  // Least and greatest bucket-level power bounds over the buckets with data (see
  // CircuitBucket::min_watts); 0 when no bucket had data.
  double min_watts = 0;
  double max_watts = 0;
  double coverage = 0;  // measured time / period length, averaged over the circuits
  Quality quality = Quality::kMeasured;  // the worst of the buckets with data
  bool has_data = false;

  double MeanWatts() const;  // real_wh over the period's length, W
};

// Sums `circuits` (each circuit's stored buckets in time order, as ReadBucketsForCircuits
// returns them) into `periods`. Buckets outside every period are ignored; a bucket with no
// row counts as unmeasured. Precondition: periods are consecutive and bucket-aligned.
std::vector<SeriesPoint> SumIntoPeriods(const std::vector<TimeRange>& periods,
                                        const std::vector<std::vector<CircuitBucket>>& circuits);

// One circuit's buckets over one range, reduced to what a sum over that range needs. Summing
// circuits' totals with SumTotals gives what SumIntoPeriods gives for that one period, except
// the power bounds, which need the circuits' buckets side by side: an answer over one range
// can keep one of these per circuit instead of every bucket.
struct CircuitTotal {
  double real_wh = 0;
  double apparent_vah = 0;
  double coverage_sum = 0;  // the buckets' coverages added (a whole day element counts its own)
  Quality quality = Quality::kMeasured;  // the worst of the buckets
  bool has_data = false;                 // any bucket at all
};
CircuitTotal TotalOf(const std::vector<CircuitBucket>& buckets);

// `circuits` summed over `range` (bucket-aligned), as SumIntoPeriods({range}, their buckets)
// with min_watts and max_watts left 0.
SeriesPoint SumTotals(const TimeRange& range, const std::vector<CircuitTotal>& circuits);

}  // namespace ampledger
