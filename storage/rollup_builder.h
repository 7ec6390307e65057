// storage/rollup_builder.h
// Keeps the `rollup` table equal to a recomputation from raw readings (rollup_recompute.h),
// cheaply. Owned and called only by the writer thread, inside the writer's transactions.
//
// How:
//  - A reading later than its channel's last one (the usual case) adds its energy span to
//    the open buckets held in memory: no reads.
//  - Any other new reading (late, out of order, or the first of a channel since start-up)
//    may change its own span and its successor's (whose register delta now starts at it).
//    Both lie within max_gap of it, so the buckets overlapping [t - max_gap, t + max_gap]
//    are recomputed from raw readings at the end of the transaction.
//  - Open buckets are written every flush (the writer flushes about once a minute) and at
//    close, when the newest reading is past the bucket's end by max_gap plus a slack. While
//    a bucket is open its start is in `rollup_pending`, inserted in the transaction that
//    opened it: after a crash, Create() recomputes exactly those buckets from raw readings.
//  - Start-up reads only the newest max_gap of readings (for each channel's last reading)
//    and the pending buckets; no full-table scan.
//  - Every bucket row written marks its local day; Finish() sums those days again into the
//    daily rollup (storage/daily_rollup.h) in the same transaction.
#pragma once

#include <map>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <vector>

#include "daemon/metering/bucket.h"
#include "storage/daily_rollup.h"
#include "storage/database.h"
#include "storage/rollup_recompute.h"
#include "storage/series.h"

namespace ampledger {

class RollupBuilder {
 public:
  // Loads the state above from `db` (which must outlive this), and rebuilds the daily rollup
  // when it was built for another zone than `time_zone` (the site's, IANA; "" keeps no daily
  // rollup). max_gap_ms > 0.
  static Result<std::unique_ptr<RollupBuilder>> Create(Database* db, const SeriesMap& series,
                                                       UnixMs max_gap_ms,
                                                       const std::string& time_zone);

  // Accounts for `reading`, just inserted (not a duplicate) in the open transaction.
  void Add(const ChannelReading& reading);

  // Before the commit: recomputes what Add() marked, closes finished buckets and, when
  // `write_open`, writes the open buckets that changed. Any error leaves this object out of
  // step with the database: the writer must stop using it (its error is sticky).
  Status Finish(bool write_open);

  // Raw readings before `t` may have been deleted by retention: buckets whose recomputation
  // would read them keep their rows as they are (their raws are gone, the rollup is the record).
  void set_raw_kept_from_ms(UnixMs t) { raw_kept_from_ms_ = t; }

  bool HasUnwrittenOpenBuckets() const;
  // The latest end of any reading seen (stored or added); very old when there is none.
  UnixMs newest_ms() const { return newest_ms_; }
  bool CheckInvariants() const;

 private:
  RollupBuilder(Database* db, const SeriesMap& series, UnixMs max_gap_ms)
      : db_(db), series_(series), max_gap_ms_(max_gap_ms) {}
  Status Load();
  Status Prepare();
  void AddSpan(int channel, const EnergySpan& span);
  void MarkForRecompute(UnixMs from_ms, UnixMs to_ms);
  Status Recompute();
  Status Open(UnixMs bucket);
  Status WriteBucket(UnixMs bucket, const std::vector<ChannelBucket>& channels);

  struct OpenBucket {
    std::vector<ChannelBucket> channels;  // by flat channel index
    bool changed = true;                  // since last written
  };

  Database* const db_;
  const SeriesMap series_;
  const UnixMs max_gap_ms_;

  std::vector<std::optional<ChannelReading>> last_;  // per channel: its newest reading, if known
  // No reading of any channel ends after floor_ms_ except the ones in last_.
  UnixMs floor_ms_ = 0;
  UnixMs newest_ms_ = 0;  // the latest end of any reading seen
  // Buckets before this were written closed (or never had data); a bucket at or after it
  // that is not open has no row yet.
  UnixMs closed_before_ms_ = 0;
  UnixMs raw_kept_from_ms_ = 0;
  std::map<UnixMs, OpenBucket> open_;  // by bucket start; all of them are in rollup_pending
  std::vector<std::pair<UnixMs, UnixMs>> recompute_;  // time ranges marked by Add()
  std::vector<UnixMs> newly_open_;                     // to insert into rollup_pending
  std::unique_ptr<DailyRollup> daily_;

  Statement upsert_;
  Statement erase_;
  Statement add_pending_;
  Statement remove_pending_;
};

}  // namespace ampledger
