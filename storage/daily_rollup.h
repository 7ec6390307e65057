// storage/daily_rollup.h
// The `rollup_day` table: each circuit's energy per local day of the site's time zone, the
// sum of the day's 15-minute `rollup` rows, so a year of daily energy is 365 rows rather than
// 35,040. Local days are unions of whole 15-minute buckets (daemon/metering/bucket.h), and a
// bucket belongs to the day its start falls in, as in api/energy_series.h SumIntoPeriods.
//
// DailyRollup keeps the table equal to that sum. It is owned and called only by the writer
// thread (through RollupBuilder), inside the writer's transactions: every bucket written is
// marked, and Finish() sums the marked days again from `rollup` (at most 100 rows per circuit
// each), so the day rows commit with the bucket rows they come from. The zone the table was
// built for is stored beside it (`rollup_day_zone`); when the site's zone changes, Create()
// rebuilds the whole table from `rollup`.
#pragma once

#include <functional>
#include <map>
#include <memory>
#include <vector>

#include "daemon/metering/bucket.h"
#include "daemon/metering/local_time.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {

class DailyRollup {
 public:
  // Prepares its statements on `db` (which must outlive this). When the stored zone is not
  // `zone` (or none is stored: a database from before schema 5), rebuilds the table from
  // `rollup` and stores the zone. Call inside a write transaction.
  static Result<std::unique_ptr<DailyRollup>> Create(Database* db, const SeriesMap& series,
                                                     const LocalTime& zone);

  // The bucket starting at `bucket` was written (or erased) in the open transaction.
  void MarkBucket(UnixMs bucket);

  // Sums every marked day again from `rollup`, in the open transaction. An error leaves the
  // table out of step: the writer treats it as any rollup error (sticky).
  Status Finish();

  bool HasMarkedDays() const { return !marked_.empty(); }

 private:
  DailyRollup(Database* db, const SeriesMap& series, const LocalTime& zone)
      : db_(db), series_(series), zone_(zone) {}
  Status Prepare();
  Status Rebuild();
  Status SumDay(const TimeRange& day);

  Database* const db_;
  const SeriesMap& series_;  // owned by the RollupBuilder that owns this
  const LocalTime zone_;
  std::map<UnixMs, UnixMs> marked_;  // day start -> day end
  TimeRange last_day_;               // the day of the last bucket marked (most are in it)

  Statement erase_;
  Statement sum_;
};

// Each circuit's energy over [from_ms, to_ms) (15-minute boundaries) in time order, in one
// read snapshot: every whole local day of `zone` inside the range is one element read from
// `rollup_day` (start_ms the day's start; its coverage the SUM of its buckets' coverages, so
// SumIntoPeriods, which divides by the period's bucket count, gives the same coverage), and
// the parts before the first and after the last whole day are 15-minute buckets. The result
// is parallel to `circuit_indexes`. Only for summing into periods that are unions of whole
// local days and buckets (day and month steps, one range); when `rollup_day` was built for
// another zone, it reads 15-minute buckets only. min_watts/max_watts of a day element are the
// least/greatest of its buckets'.
Result<std::vector<std::vector<CircuitBucket>>> ReadDaysAndBucketsForCircuits(
    const Database& db, const SeriesMap& series, const LocalTime& zone,
    const std::vector<int>& circuit_indexes, UnixMs from_ms, UnixMs to_ms);

// The same elements handed to `visit` one circuit at a time (i is the position in
// `circuit_indexes`), in the same read snapshot. An answer that reduces each circuit to a sum
// then holds one circuit's elements at a time: its memory does not grow with the range.
Status VisitDaysAndBucketsForCircuits(
    const Database& db, const SeriesMap& series, const LocalTime& zone,
    const std::vector<int>& circuit_indexes, UnixMs from_ms, UnixMs to_ms,
    const std::function<void(std::size_t i, const std::vector<CircuitBucket>& elements)>& visit);

}  // namespace ampledger
