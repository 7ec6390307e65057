// api/energy_series.cpp
#include "api/energy_series.h"

#include <algorithm>
#include <map>

namespace ampledger {
namespace {

// Measured bucket-time over the period's buckets, averaged over the circuits: `coverage_sum` is
// the circuits' bucket coverages added.
double Coverage(const TimeRange& period, double coverage_sum, std::size_t circuit_count) {
  const double buckets = static_cast<double>(period.DurationMs()) / kMsPerBucket;
  const double circuits = static_cast<double>(std::max<std::size_t>(1, circuit_count));
  return buckets > 0 ? coverage_sum / (buckets * circuits) : 0;
}

UnixMs FloorMod(UnixMs value, UnixMs divisor) { return ((value % divisor) + divisor) % divisor; }

const char* PeriodWord(SeriesStep step) {
  switch (step) {
    case SeriesStep::kQuarterHour: return "a 15-minute bucket (UTC quarter hour)";
    case SeriesStep::kHour: return "a local hour";
    case SeriesStep::kDay: return "a local day (local midnight)";
    case SeriesStep::kMonth: return "a local month (local midnight of the 1st)";
    case SeriesStep::kRaw: break;
  }
  return "a period";
}

// True when `instant` starts a period of `step` in `zone`.
Result<bool> IsBoundary(const LocalTime& zone, SeriesStep step, UnixMs instant) {
  if (FloorMod(instant, kMsPerBucket) != 0) return false;
  if (step == SeriesStep::kQuarterHour) return true;
  const LocalMoment local = zone.At(instant);
  if (step == SeriesStep::kHour) return local.minute_of_day % 60 == 0;
  if (step == SeriesStep::kMonth && local.date.day() != date::day(1)) return false;
  Result<TimeRange> day = zone.Day(local.date);
  if (!day.ok()) return day.status();
  return day->start_ms == instant;
}

Status TooManyPoints(SeriesStep step, int max_points) {
  std::string coarser;
  switch (step) {
    case SeriesStep::kQuarterHour: coarser = "hour, day or month"; break;
    case SeriesStep::kHour: coarser = "day or month"; break;
    case SeriesStep::kDay: coarser = "month"; break;
    default: coarser = "a shorter range"; break;
  }
  return Status::InvalidArgument("query parameter \"step\": the range holds more than " +
                                 std::to_string(max_points) + " points at step " +
                                 SeriesStepName(step) + "; use a coarser step (" + coarser +
                                 ") or a shorter range");
}

// The end of the period of `step` that starts at `start` (a boundary).
Result<UnixMs> NextBoundary(const LocalTime& zone, SeriesStep step, UnixMs start) {
  switch (step) {
    case SeriesStep::kQuarterHour: return start + kMsPerBucket;
    case SeriesStep::kHour: {
      // A local hour ends at the next bucket whose wall clock is on the hour; a DST jump
      // makes no local hour longer than 2 hours.
      for (UnixMs t = start + kMsPerBucket; t <= start + 8 * kMsPerBucket; t += kMsPerBucket) {
        if (zone.At(t).minute_of_day % 60 == 0) return t;
      }
      return Status::InvalidArgument("the local hour starting at " + std::to_string(start) +
                                     " ms in " + zone.zone_name() + " has no end");
    }
    case SeriesStep::kDay: {
      Result<TimeRange> day = zone.Day(zone.At(start).date);
      if (!day.ok()) return day.status();
      return day->end_ms;
    }
    case SeriesStep::kMonth: {
      const date::year_month_day first = zone.At(start).date;
      Result<TimeRange> month = zone.Month(first.year() / first.month());
      if (!month.ok()) return month.status();
      return month->end_ms;
    }
    case SeriesStep::kRaw: break;
  }
  return Status::InvalidArgument("step raw has no periods");
}

}  // namespace

Result<SeriesStep> ParseSeriesStep(std::string_view text) {
  if (text == "raw") return SeriesStep::kRaw;
  if (text == "15m") return SeriesStep::kQuarterHour;
  if (text == "hour") return SeriesStep::kHour;
  if (text == "day") return SeriesStep::kDay;
  if (text == "month") return SeriesStep::kMonth;
  return Status::InvalidArgument("query parameter \"step\": \"" + std::string(text) +
                                 "\" is not raw, 15m, hour, day or month");
}

const char* SeriesStepName(SeriesStep step) {
  switch (step) {
    case SeriesStep::kRaw: return "raw";
    case SeriesStep::kQuarterHour: return "15m";
    case SeriesStep::kHour: return "hour";
    case SeriesStep::kDay: return "day";
    case SeriesStep::kMonth: return "month";
  }
  return "raw";
}

Result<std::vector<TimeRange>> SeriesPeriods(const LocalTime& zone, SeriesStep step,
                                             UnixMs from_ms, UnixMs to_ms, int max_points) {
  if (to_ms <= from_ms) {
    return Status::InvalidArgument("query parameter \"to\": must be later than \"from\"");
  }
  for (const auto& [name, instant] : {std::pair<const char*, UnixMs>{"from", from_ms},
                                      std::pair<const char*, UnixMs>{"to", to_ms}}) {
    Result<bool> boundary = IsBoundary(zone, step, instant);
    if (!boundary.ok()) return boundary.status();
    if (!*boundary) {
      return Status::InvalidArgument(std::string("query parameter \"") + name +
                                     "\": is not the start of " + PeriodWord(step) + " in " +
                                     zone.zone_name() + ", as step " + SeriesStepName(step) +
                                     " needs");
    }
  }
  // The loop stops at max_points + 1 periods, which bounds the work for any range.
  std::vector<TimeRange> periods;
  for (UnixMs start = from_ms; start < to_ms;) {
    if (static_cast<int>(periods.size()) == max_points) return TooManyPoints(step, max_points);
    Result<UnixMs> end = NextBoundary(zone, step, start);
    if (!end.ok()) return end.status();
    periods.push_back({start, *end});
    start = *end;
  }
  return periods;
}

double SeriesPoint::MeanWatts() const {
  const UnixMs length = period.DurationMs();
  return length > 0 ? real_wh * 3600.0 * kMsPerSecond / static_cast<double>(length) : 0;
}

std::vector<SeriesPoint> SumIntoPeriods(const std::vector<TimeRange>& periods,
                                        const std::vector<std::vector<CircuitBucket>>& circuits) {
  // The circuits' buckets summed per bucket start (CombineChannels' rule for min/max).
  struct Summed {
    double real_wh = 0, apparent_vah = 0, min_watts = 0, max_watts = 0, coverage = 0;
    Quality quality = Quality::kMeasured;
  };
  std::map<UnixMs, Summed> by_start;
  for (const std::vector<CircuitBucket>& buckets : circuits) {
    for (const CircuitBucket& bucket : buckets) {
      Summed& sum = by_start[bucket.start_ms];
      sum.real_wh += bucket.real_wh;
      sum.apparent_vah += bucket.apparent_vah;
      sum.min_watts += bucket.min_watts;
      sum.max_watts += bucket.max_watts;
      sum.coverage += bucket.coverage;
      sum.quality = Worse(sum.quality, bucket.quality);
    }
  }
  const std::size_t circuit_count = circuits.size();
  std::vector<SeriesPoint> points;
  points.reserve(periods.size());
  for (const TimeRange& period : periods) {
    SeriesPoint point;
    point.period = period;
    double coverage_sum = 0;
    for (auto it = by_start.lower_bound(period.start_ms);
         it != by_start.end() && it->first < period.end_ms; ++it) {
      const Summed& sum = it->second;
      point.real_wh += sum.real_wh;
      point.apparent_vah += sum.apparent_vah;
      point.min_watts = point.has_data ? std::min(point.min_watts, sum.min_watts) : sum.min_watts;
      point.max_watts = point.has_data ? std::max(point.max_watts, sum.max_watts) : sum.max_watts;
      point.quality = Worse(point.quality, sum.quality);
      point.has_data = true;
      coverage_sum += sum.coverage;
    }
    point.coverage = Coverage(period, coverage_sum, circuit_count);
    points.push_back(point);
  }
  return points;
}

CircuitTotal TotalOf(const std::vector<CircuitBucket>& buckets) {
  CircuitTotal total;
  for (const CircuitBucket& bucket : buckets) {
    total.real_wh += bucket.real_wh;
    total.apparent_vah += bucket.apparent_vah;
    total.coverage_sum += bucket.coverage;
    total.quality = Worse(total.quality, bucket.quality);
    total.has_data = true;
  }
  return total;
}

SeriesPoint SumTotals(const TimeRange& range, const std::vector<CircuitTotal>& circuits) {
  SeriesPoint point;
  point.period = range;
  double coverage_sum = 0;
  for (const CircuitTotal& circuit : circuits) {
    point.real_wh += circuit.real_wh;
    point.apparent_vah += circuit.apparent_vah;
    coverage_sum += circuit.coverage_sum;
    if (circuit.has_data) point.quality = Worse(point.quality, circuit.quality);
    point.has_data = point.has_data || circuit.has_data;
  }
  point.coverage = Coverage(range, coverage_sum, circuits.size());
  return point;
}

}  // namespace ampledger
