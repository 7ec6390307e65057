// daemon/metering/meter_interval.cpp
#include "daemon/metering/meter_interval.h"

#include <algorithm>
#include <cmath>

#include <date/date.h>

namespace ampledger {
namespace {

std::string UtcText(UnixMs instant) {
  using namespace std::chrono;
  return date::format("%FT%TZ", floor<seconds>(sys_time<milliseconds>(milliseconds(instant))));
}

std::string Describe(const MeterInterval& interval) {
  return "interval " + UtcText(interval.span.start_ms) + " to " + UtcText(interval.span.end_ms);
}

}  // namespace

Status CheckMeterIntervals(std::vector<MeterInterval>& intervals) {
  for (const MeterInterval& interval : intervals) {
    if (interval.span.end_ms <= interval.span.start_ms) {
      return Status::InvalidArgument(Describe(interval) + ": must end after it starts");
    }
    if (interval.span.DurationMs() > kMaxMeterIntervalMs) {
      return Status::InvalidArgument(Describe(interval) + ": longer than 2 days");
    }
    if (!std::isfinite(interval.wh) || interval.wh < 0 || interval.wh > kMaxMeterIntervalWh) {
      return Status::InvalidArgument(Describe(interval) + ": energy must be from 0 to 1e9 Wh");
    }
  }
  std::sort(intervals.begin(), intervals.end(), [](const MeterInterval& a, const MeterInterval& b) {
    return a.span.start_ms < b.span.start_ms;
  });
  for (size_t i = 1; i < intervals.size(); ++i) {
    if (intervals[i].span.start_ms < intervals[i - 1].span.end_ms) {
      return Status::InvalidArgument(Describe(intervals[i]) + " overlaps " +
                                     Describe(intervals[i - 1]));
    }
  }
  return Status::Ok();
}

Result<MeterEnergy> MeterIntervalEnergy(const std::vector<MeterInterval>& intervals,
                                        TimeRange range) {
  auto ends_after = [](const MeterInterval& interval, UnixMs t) { return interval.span.end_ms <= t; };
  auto first = std::lower_bound(intervals.begin(), intervals.end(), range.start_ms, ends_after);
  double wh = 0;
  UnixMs covered_to = range.start_ms;
  for (auto it = first; it != intervals.end() && covered_to < range.end_ms; ++it) {
    if (it->span.start_ms > covered_to) break;  // a gap
    const UnixMs to = std::min(it->span.end_ms, range.end_ms);
    wh += it->wh * static_cast<double>(to - covered_to) /
          static_cast<double>(it->span.DurationMs());
    covered_to = to;
  }
  if (covered_to < range.end_ms) {
    return Status::NotFound("main meter interval reads do not cover " + UtcText(covered_to));
  }
  return MeterEnergy{wh / 1000.0, kIntervalBasis};
}

Result<MeterEnergy> MainMeterEnergyFromAll(const std::vector<MeterInterval>& intervals,
                                           const std::vector<MainMeterRead>& reads,
                                           TimeRange range) {
  Result<MeterEnergy> from_intervals = MeterIntervalEnergy(intervals, range);
  if (from_intervals.ok() || intervals.empty()) {
    return from_intervals.ok() ? from_intervals : MainMeterEnergy(reads, range);
  }
  Result<MeterEnergy> from_reads = MainMeterEnergy(reads, range);
  if (from_reads.ok() || from_reads.status().code() != StatusCode::kNotFound) return from_reads;
  return Status::NotFound(from_intervals.status().message() + "; " +
                          from_reads.status().message());
}

}  // namespace ampledger
