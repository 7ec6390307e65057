// storage/queries.cpp
#include "storage/queries.h"

#include <algorithm>

#include "storage/reading_table.h"

namespace ampledger {
namespace {

constexpr std::string_view kSelectBucketsSql =
    "SELECT bucket, real_wh, apparent_vah, min_w, max_w, coverage, quality FROM rollup "
    "WHERE circuit = ?1 AND bucket >= ?2 AND bucket < ?3 ORDER BY bucket";

}  // namespace

Status AppendRollupRows(Statement& select, std::int64_t circuit_id, UnixMs from_ms, UnixMs to_ms,
                        std::vector<CircuitBucket>* out) {
  if (from_ms >= to_ms) return Status();
  select.Bind(1, circuit_id);
  select.Bind(2, static_cast<std::int64_t>(from_ms));
  select.Bind(3, static_cast<std::int64_t>(to_ms));
  for (;;) {
    Result<bool> row = select.Step("read rollups");
    if (!row.ok()) {
      select.Reset();
      return row.status();
    }
    if (!row.value()) break;
    CircuitBucket b;
    b.start_ms = select.Int(0);
    b.real_wh = select.Double(1);
    b.apparent_vah = select.Double(2);
    b.min_watts = select.Double(3);
    b.max_watts = select.Double(4);
    b.coverage = select.Double(5);
    b.quality = static_cast<Quality>(std::clamp<std::int64_t>(select.Int(6), 0, 2));
    out->push_back(b);
  }
  select.Reset();
  return Status();
}

Result<std::vector<CircuitBucket>> ReadCircuitBuckets(const Database& db, const SeriesMap& series,
                                                      int circuit_index, UnixMs from_ms,
                                                      UnixMs to_ms) {
  Result<Statement> select = db.Prepare(kSelectBucketsSql);
  if (!select.ok()) return select.status();
  std::vector<CircuitBucket> out;
  if (Status s = AppendRollupRows(*select, series.circuit_ids[circuit_index], from_ms, to_ms, &out);
      !s.ok()) {
    return s;
  }
  return out;
}

Result<std::vector<std::vector<CircuitBucket>>> ReadBucketsForCircuits(
    const Database& db, const SeriesMap& series, const std::vector<int>& circuit_indexes,
    UnixMs from_ms, UnixMs to_ms) {
  Result<Statement> select = db.Prepare(kSelectBucketsSql);
  if (!select.ok()) return select.status();
  if (Status s = db.Exec("BEGIN", "read rollups"); !s.ok()) return s;
  std::vector<std::vector<CircuitBucket>> out(circuit_indexes.size());
  Status status;
  for (size_t i = 0; i < circuit_indexes.size() && status.ok(); ++i) {
    status = AppendRollupRows(*select, series.circuit_ids[circuit_indexes[i]], from_ms, to_ms, &out[i]);
  }
  (void)db.Exec("COMMIT", "read rollups");
  if (!status.ok()) return status;
  return out;
}

Result<std::vector<ChannelReading>> ReadChannelReadings(const Database& db,
                                                        const SeriesMap& series,
                                                        int channel_index, UnixMs from_ms,
                                                        UnixMs to_ms, int limit) {
  Result<Statement> select =
      db.Prepare("SELECT " + std::string(kReadingColumns) +
                 " FROM reading WHERE t_end >= ?1 AND t_end < ?2 AND channel = ?3"
                 " ORDER BY t_end LIMIT ?4");
  if (!select.ok()) return select.status();
  select->Bind(1, static_cast<std::int64_t>(from_ms));
  select->Bind(2, static_cast<std::int64_t>(to_ms));
  select->Bind(3, series.channel_ids[channel_index]);
  select->Bind(4, static_cast<std::int64_t>(std::max(0, limit)));
  std::vector<ChannelReading> out;
  for (;;) {
    Result<bool> row = select->Step("read readings");
    if (!row.ok()) return row.status();
    if (!row.value()) break;
    out.push_back(ReadingFromRow(*select, channel_index));
  }
  return out;
}

Result<std::vector<ChannelReading>> ReadLatestReadings(const Database& db,
                                                       const SeriesMap& series, UnixMs since_ms) {
  Result<Statement> select = db.Prepare("SELECT " + std::string(kReadingColumns) +
                                        " FROM reading WHERE t_end >= ?1 ORDER BY t_end DESC");
  if (!select.ok()) return select.status();
  select->Bind(1, static_cast<std::int64_t>(since_ms));
  std::vector<bool> found(series.ChannelCount(), false);
  int missing = series.ChannelCount();
  std::vector<ChannelReading> out;
  while (missing > 0) {
    Result<bool> row = select->Step("read latest readings");
    if (!row.ok()) return row.status();
    if (!row.value()) break;
    int channel = series.ChannelIndexOfId(select->Int(1));
    if (channel < 0 || found[channel]) continue;
    found[channel] = true;
    --missing;
    out.push_back(ReadingFromRow(*select, channel));
  }
  std::sort(out.begin(), out.end(),
            [](const ChannelReading& a, const ChannelReading& b) { return a.channel < b.channel; });
  return out;
}

}  // namespace ampledger
