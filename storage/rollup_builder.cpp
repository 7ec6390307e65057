// storage/rollup_builder.cpp
#include "storage/rollup_builder.h"

#include <algorithm>
#include <limits>

#include "storage/reading_table.h"

namespace ampledger {
namespace {

// Far enough from the int64 limits that adding or subtracting gaps cannot overflow.
constexpr UnixMs kLongAgo = std::numeric_limits<UnixMs>::min() / 4;
// A bucket closes this long after the newest reading has passed its end plus max_gap:
// nodes' clocks and deliveries differ by a little, and a reading that still lands in a closed
// bucket costs a recomputation.
constexpr UnixMs kCloseSlackMs = 2 * 60 * kMsPerSecond;

}  // namespace

Result<std::unique_ptr<RollupBuilder>> RollupBuilder::Create(Database* db, const SeriesMap& series,
                                                             UnixMs max_gap_ms,
                                                             const std::string& time_zone) {
  std::optional<LocalTime> zone;
  if (!time_zone.empty()) {
    Result<LocalTime> found = LocalTime::ForZone(time_zone);
    if (!found.ok()) return found.status();
    zone = *found;
  }
  std::unique_ptr<RollupBuilder> builder(new RollupBuilder(db, series, max_gap_ms));
  builder->raw_kept_from_ms_ = kLongAgo;
  if (Status s = builder->Prepare(); !s.ok()) return s;
  if (Status s = db->Exec("BEGIN IMMEDIATE", "recover rollups"); !s.ok()) return s;
  Status s;
  if (zone) {
    Result<std::unique_ptr<DailyRollup>> daily = DailyRollup::Create(db, builder->series_, *zone);
    s = daily.status();
    if (s.ok()) builder->daily_ = std::move(daily.value());
  } else {
    // A config built in code with no zone (a site's config always has one): no daily rollup,
    // and none stored, so readers sum 15-minute buckets.
    s = db->Exec("DELETE FROM rollup_day_zone", "forget the daily rollup's zone");
  }
  if (s.ok()) s = builder->Load();
  if (s.ok()) s = builder->Finish(/*write_open=*/true);
  if (s.ok()) s = db->Exec("COMMIT", "recover rollups");
  if (!s.ok()) {
    (void)db->Exec("ROLLBACK", "roll back rollup recovery");
    return s;
  }
  return builder;
}

Status RollupBuilder::Prepare() {
  struct {
    Statement* statement;
    std::string_view sql;
  } statements[] = {
      {&upsert_,
       "INSERT OR REPLACE INTO rollup (circuit, bucket, real_wh, apparent_vah, min_w, max_w, "
       "coverage, quality) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)"},
      {&erase_, "DELETE FROM rollup WHERE circuit = ?1 AND bucket = ?2"},
      {&add_pending_, "INSERT OR IGNORE INTO rollup_pending (bucket) VALUES (?1)"},
      {&remove_pending_, "DELETE FROM rollup_pending WHERE bucket = ?1"},
  };
  for (auto& [statement, sql] : statements) {
    Result<Statement> prepared = db_->Prepare(sql);
    if (!prepared.ok()) return prepared.status();
    *statement = std::move(prepared.value());
  }
  return Status();
}

Status RollupBuilder::Load() {
  last_.assign(series_.ChannelCount(), std::nullopt);
  Result<Statement> newest = db_->Prepare("SELECT max(t_end) FROM reading");
  if (!newest.ok()) return newest.status();
  Result<bool> row = newest->Step("find newest reading");
  if (!row.ok()) return row.status();
  if (!row.value() || newest->IsNull(0)) {
    floor_ms_ = newest_ms_ = closed_before_ms_ = kLongAgo;
  } else {
    newest_ms_ = newest->Int(0);
    floor_ms_ = newest_ms_ - max_gap_ms_;
    closed_before_ms_ = BucketStart(newest_ms_) + kMsPerBucket;
    // Each channel's newest reading, if it is within max_gap of the newest of all; older
    // ones can be no channel's predecessor for energy (IntervalEnergy rule 1).
    Result<Statement> recent = db_->Prepare("SELECT " + std::string(kReadingColumns) +
                                            " FROM reading WHERE t_end > ?1 ORDER BY t_end");
    if (!recent.ok()) return recent.status();
    recent->Bind(1, static_cast<std::int64_t>(floor_ms_));
    for (;;) {
      Result<bool> next = recent->Step("load recent readings");
      if (!next.ok()) return next.status();
      if (!next.value()) break;
      int channel = series_.ChannelIndexOfId(recent->Int(1));
      if (channel >= 0) last_[channel] = ReadingFromRow(*recent, channel);
    }
  }
  Result<Statement> pending = db_->Prepare("SELECT bucket FROM rollup_pending ORDER BY bucket");
  if (!pending.ok()) return pending.status();
  for (;;) {
    Result<bool> next = pending->Step("load pending buckets");
    if (!next.ok()) return next.status();
    if (!next.value()) break;
    UnixMs bucket = pending->Int(0);
    open_[bucket].channels.resize(series_.ChannelCount());
    MarkForRecompute(bucket, bucket + kMsPerBucket - 1);
  }
  return Status();
}

void RollupBuilder::Add(const ChannelReading& reading) {
  int channel = reading.channel;
  if (channel < 0 || channel >= series_.ChannelCount() ||
      series_.circuit_of_channel[channel] < 0) {
    return;  // stored raw only
  }
  newest_ms_ = std::max(newest_ms_, reading.end_ms);
  std::optional<ChannelReading>& last = last_[channel];
  if (last && reading.end_ms > last->end_ms) {
    AddSpan(channel, IntervalEnergy(&*last, reading, max_gap_ms_));
    last = reading;
  } else if (!last && reading.end_ms > floor_ms_) {
    // The channel has nothing after floor_ms_; a predecessor within max_gap may exist before.
    if (reading.end_ms - max_gap_ms_ >= floor_ms_) {
      AddSpan(channel, IntervalEnergy(nullptr, reading, max_gap_ms_));
    } else {
      MarkForRecompute(reading.end_ms - max_gap_ms_, reading.end_ms + max_gap_ms_);
    }
    last = reading;
  } else {
    MarkForRecompute(reading.end_ms - max_gap_ms_, reading.end_ms + max_gap_ms_);
  }
}

void RollupBuilder::AddSpan(int channel, const EnergySpan& span) {
  SpreadOverBuckets(span, [&](UnixMs bucket, double fraction, UnixMs overlap_ms) {
    auto it = open_.find(bucket);
    if (it == open_.end()) {
      if (bucket < closed_before_ms_) {
        MarkForRecompute(bucket, bucket + kMsPerBucket - 1);  // its row is final: redo it
        return;
      }
      it = open_.emplace(bucket, OpenBucket{}).first;
      it->second.channels.resize(series_.ChannelCount());
      newly_open_.push_back(bucket);
    }
    it->second.channels[channel].Add(span, fraction, overlap_ms);
    it->second.changed = true;
  });
}

void RollupBuilder::MarkForRecompute(UnixMs from_ms, UnixMs to_ms) {
  recompute_.emplace_back(BucketStart(from_ms), BucketStart(to_ms) + kMsPerBucket);
}

Status RollupBuilder::Recompute() {
  std::sort(recompute_.begin(), recompute_.end());
  std::vector<std::pair<UnixMs, UnixMs>> merged;
  for (const auto& range : recompute_) {
    if (!merged.empty() && range.first <= merged.back().second) {
      merged.back().second = std::max(merged.back().second, range.second);
    } else {
      merged.push_back(range);
    }
  }
  recompute_.clear();
  for (auto [from, to] : merged) {
    from = std::max(from, BucketStart(raw_kept_from_ms_ + max_gap_ms_) + kMsPerBucket);
    if (from >= to) continue;
    Result<ChannelBuckets> fresh = RecomputeChannelBuckets(*db_, series_, from, to, max_gap_ms_);
    if (!fresh.ok()) return fresh.status();
    for (UnixMs bucket = from; bucket < to; bucket += kMsPerBucket) {
      auto found = fresh->find(bucket);
      auto open = open_.find(bucket);
      if (open != open_.end() || bucket >= closed_before_ms_) {
        if (found == fresh->end() && open == open_.end()) continue;  // nothing, no row
        if (open == open_.end()) {
          open = open_.emplace(bucket, OpenBucket{}).first;
          newly_open_.push_back(bucket);
        }
        open->second.channels = found != fresh->end()
                                    ? std::move(found->second)
                                    : std::vector<ChannelBucket>(series_.ChannelCount());
        open->second.changed = true;
      } else {
        static const std::vector<ChannelBucket> kNothing;
        if (Status s = WriteBucket(bucket, found != fresh->end() ? found->second : kNothing);
            !s.ok()) {
          return s;
        }
      }
    }
  }
  return Status();
}

Status RollupBuilder::WriteBucket(UnixMs bucket, const std::vector<ChannelBucket>& channels) {
  if (daily_) daily_->MarkBucket(bucket);
  for (int circuit = 0; circuit < series_.CircuitCount(); ++circuit) {
    bool any = false;
    for (int channel : series_.channels_of_circuit[circuit]) {
      any |= channel < static_cast<int>(channels.size()) && !channels[channel].empty;
    }
    Statement& statement = any ? upsert_ : erase_;
    statement.Bind(1, series_.circuit_ids[circuit]);
    statement.Bind(2, static_cast<std::int64_t>(bucket));
    if (any) {
      CircuitBucket b = CircuitBucketOf(series_, circuit, bucket, channels);
      statement.Bind(3, b.real_wh);
      statement.Bind(4, b.apparent_vah);
      statement.Bind(5, b.min_watts);
      statement.Bind(6, b.max_watts);
      statement.Bind(7, b.coverage);
      statement.Bind(8, static_cast<std::int64_t>(b.quality));
    }
    if (Status s = statement.Run(any ? "write rollup" : "erase rollup"); !s.ok()) return s;
  }
  return Status();
}

Status RollupBuilder::Finish(bool write_open) {
  if (Status s = Recompute(); !s.ok()) return s;
  for (UnixMs bucket : newly_open_) {
    add_pending_.Bind(1, static_cast<std::int64_t>(bucket));
    if (Status s = add_pending_.Run("mark bucket pending"); !s.ok()) return s;
  }
  newly_open_.clear();
  while (!open_.empty() &&
         open_.begin()->first + kMsPerBucket + max_gap_ms_ + kCloseSlackMs <= newest_ms_) {
    auto first = open_.begin();
    if (Status s = WriteBucket(first->first, first->second.channels); !s.ok()) return s;
    remove_pending_.Bind(1, static_cast<std::int64_t>(first->first));
    if (Status s = remove_pending_.Run("close bucket"); !s.ok()) return s;
    closed_before_ms_ = std::max(closed_before_ms_, first->first + kMsPerBucket);
    open_.erase(first);
  }
  if (write_open) {
    for (auto& [bucket, open] : open_) {
      if (!open.changed) continue;
      if (Status s = WriteBucket(bucket, open.channels); !s.ok()) return s;
      open.changed = false;
    }
  }
  return daily_ ? daily_->Finish() : Status();
}

bool RollupBuilder::HasUnwrittenOpenBuckets() const {
  if (!recompute_.empty() || !newly_open_.empty()) return true;
  return std::any_of(open_.begin(), open_.end(), [](const auto& e) { return e.second.changed; });
}

bool RollupBuilder::CheckInvariants() const {
  for (const auto& [bucket, open] : open_) {
    if (BucketStart(bucket) != bucket) return false;
    if (static_cast<int>(open.channels.size()) != series_.ChannelCount()) return false;
  }
  return static_cast<int>(last_.size()) == series_.ChannelCount();
}

}  // namespace ampledger
