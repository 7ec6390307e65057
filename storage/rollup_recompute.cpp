// storage/rollup_recompute.cpp
#include "storage/rollup_recompute.h"

#include <optional>

#include "storage/reading_table.h"

namespace ampledger {

Result<ChannelBuckets> RecomputeChannelBuckets(const Database& db, const SeriesMap& series,
                                               UnixMs from_ms, UnixMs to_ms, UnixMs max_gap_ms) {
  Result<Statement> select =
      db.Prepare("SELECT " + std::string(kReadingColumns) +
                 " FROM reading WHERE t_end >= ?1 AND t_end < ?2 ORDER BY t_end, channel");
  if (!select.ok()) return select.status();
  select->Bind(1, static_cast<std::int64_t>(from_ms - max_gap_ms));
  select->Bind(2, static_cast<std::int64_t>(to_ms + max_gap_ms));
  ChannelBuckets out;
  std::vector<std::optional<ChannelReading>> previous(series.ChannelCount());
  for (;;) {
    Result<bool> row = select->Step("recompute rollups");
    if (!row.ok()) return row.status();
    if (!row.value()) break;
    int channel = series.ChannelIndexOfId(select->Int(1));
    if (channel < 0 || series.circuit_of_channel[channel] < 0) continue;
    ChannelReading reading = ReadingFromRow(*select, channel);
    std::optional<ChannelReading>& last = previous[channel];
    if (reading.end_ms > from_ms) {
      EnergySpan span = IntervalEnergy(last ? &*last : nullptr, reading, max_gap_ms);
      SpreadOverBuckets(span, [&](UnixMs bucket, double fraction, UnixMs overlap_ms) {
        if (bucket < from_ms || bucket >= to_ms) return;
        std::vector<ChannelBucket>& buckets = out[bucket];
        if (buckets.empty()) buckets.resize(series.ChannelCount());
        buckets[channel].Add(span, fraction, overlap_ms);
      });
    }
    last = std::move(reading);
  }
  return out;
}

CircuitBucket CircuitBucketOf(const SeriesMap& series, int circuit_index, UnixMs start_ms,
                              const std::vector<ChannelBucket>& channels) {
  const std::vector<int>& members = series.channels_of_circuit[circuit_index];
  std::vector<const ChannelBucket*> parts;
  for (int channel : members) {
    if (channel < static_cast<int>(channels.size())) parts.push_back(&channels[channel]);
  }
  return CombineChannels(start_ms, parts, std::max<int>(1, static_cast<int>(members.size())));
}

Result<std::vector<CircuitBucket>> RecomputeCircuitBuckets(const Database& db,
                                                           const SeriesMap& series,
                                                           int circuit_index, UnixMs from_ms,
                                                           UnixMs to_ms, UnixMs max_gap_ms) {
  Result<ChannelBuckets> buckets =
      RecomputeChannelBuckets(db, series, from_ms, to_ms, max_gap_ms);
  if (!buckets.ok()) return buckets.status();
  std::vector<CircuitBucket> out;
  for (const auto& [start, channels] : buckets.value()) {
    bool any = false;
    for (int channel : series.channels_of_circuit[circuit_index]) any |= !channels[channel].empty;
    if (any) out.push_back(CircuitBucketOf(series, circuit_index, start, channels));
  }
  return out;
}

}  // namespace ampledger
