// daemon/espi/espi_usage.cpp
#include "daemon/espi/espi_usage.h"

#include <algorithm>
#include <cmath>

namespace ampledger {
namespace {

bool IsDeliveredEnergy(const EspiReadingType& type) {
  return type.kind == kEspiKindEnergy && type.uom == kEspiUomWattHour &&
         type.flow_direction == kEspiFlowForward &&
         type.accumulation_behaviour == kEspiAccumulationDeltaData;
}

std::string Describe(const EspiSeries& series) {
  return "\"" + series.title + "\" (kind " + std::to_string(series.type.kind) + ", uom " +
         std::to_string(series.type.uom) + ", flowDirection " +
         std::to_string(series.type.flow_direction) + ", accumulationBehaviour " +
         std::to_string(series.type.accumulation_behaviour) + ")";
}

}  // namespace

EspiSeries BuildEspiSeries(const EspiSeriesOptions& options, const LocalTime& zone,
                           const std::vector<MeterInterval>& intervals) {
  EspiSeries series;
  series.usage_point_title = options.usage_point_title;
  series.title = options.title;
  series.type.flow_direction = options.flow_direction;
  series.type.interval_length_s = options.interval_s;
  double running_wh = 0;
  std::int64_t written_wh = 0;
  date::year_month_day block_day{};
  for (const MeterInterval& interval : intervals) {
    const date::year_month_day day = zone.At(interval.span.start_ms).date;
    if (series.blocks.empty() || day != block_day) {
      block_day = day;
      Result<TimeRange> local_day = zone.Day(day);
      EspiIntervalBlock& block = series.blocks.emplace_back();
      TimeRange span = local_day.ok() ? *local_day : interval.span;
      if (options.range.end_ms > options.range.start_ms) {
        span.start_ms = std::max(span.start_ms, options.range.start_ms);
        span.end_ms = std::min(span.end_ms, options.range.end_ms);
      }
      block.start_s = span.start_ms / kMsPerSecond;
      block.duration_s = span.DurationMs() / kMsPerSecond;
    }
    running_wh += interval.wh;
    const std::int64_t total = std::llround(running_wh);
    series.blocks.back().readings.push_back({interval.span.start_ms / kMsPerSecond,
                                             interval.span.DurationMs() / kMsPerSecond,
                                             total - written_wh});
    written_wh = total;
  }
  return series;
}

Result<std::vector<MeterInterval>> DeliveredIntervals(const EspiFeed& feed,
                                                      const std::string& file_name) {
  const EspiSeries* delivered = nullptr;
  std::string others;
  for (const EspiSeries& series : feed.series) {
    if (!IsDeliveredEnergy(series.type)) {
      others += (others.empty() ? "" : ", ") + Describe(series);
      continue;
    }
    if (delivered != nullptr) {
      return Status::InvalidArgument(file_name + ": more than one series of delivered energy (" +
                                     Describe(*delivered) + " and " + Describe(series) +
                                     "); import one meter's file at a time");
    }
    delivered = &series;
  }
  if (delivered == nullptr) {
    return Status::InvalidArgument(
        file_name + ": no series of delivered interval energy (kind 12, uom 72 Wh, " +
        "flowDirection 1, accumulationBehaviour 4)" + (others.empty() ? "" : "; found " + others));
  }
  const double scale = std::pow(10.0, delivered->type.power_of_ten_multiplier);
  std::vector<MeterInterval> intervals;
  for (const EspiIntervalBlock& block : delivered->blocks) {
    for (const EspiIntervalReading& reading : block.readings) {
      MeterInterval& interval = intervals.emplace_back();
      interval.span = {reading.start_s * kMsPerSecond,
                       (reading.start_s + reading.duration_s) * kMsPerSecond};
      interval.wh = static_cast<double>(reading.value) * scale;
    }
  }
  if (Status s = CheckMeterIntervals(intervals); !s.ok()) {
    return Status::InvalidArgument(file_name + ": " + s.message());
  }
  return intervals;
}

}  // namespace ampledger
