// storage/daily_rollup.cpp
#include "storage/daily_rollup.h"

#include "storage/queries.h"

namespace ampledger {
namespace {

// The local day of `zone` holding instant `t`. At() names the date a clock shows; on the rare
// instants a clock shows a date whose bounds (LocalTime::Day, earliest midnight) do not hold
// them, the neighbouring day does.
Result<TimeRange> DayContaining(const LocalTime& zone, UnixMs t) {
  const date::sys_days shown{zone.At(t).date};
  for (int offset : {0, -1, 1}) {
    Result<TimeRange> day = zone.Day(date::year_month_day{shown + date::days(offset)});
    if (!day.ok()) return day.status();
    if (day->Contains(t)) return *day;
  }
  return Status::InvalidArgument("no local day of " + zone.zone_name() + " holds " +
                                 std::to_string(t));
}

constexpr std::string_view kSelectBucketsSql =
    "SELECT bucket, real_wh, apparent_vah, min_w, max_w, coverage, quality FROM rollup "
    "WHERE circuit = ?1 AND bucket >= ?2 AND bucket < ?3 ORDER BY bucket";
constexpr std::string_view kSelectDaysSql =
    "SELECT day, real_wh, apparent_vah, min_w, max_w, coverage_sum, quality FROM rollup_day "
    "WHERE circuit = ?1 AND day >= ?2 AND day < ?3 ORDER BY day";

// True when `rollup_day` holds days of `zone`.
Result<bool> BuiltForZone(const Database& db, const LocalTime& zone) {
  Result<Statement> select = db.Prepare("SELECT zone FROM rollup_day_zone");
  if (!select.ok()) return select.status();
  Result<bool> row = select->Step("read the daily rollup's zone");
  if (!row.ok()) return row.status();
  return *row && select->Text(0) == zone.zone_name();
}

}  // namespace

Result<std::unique_ptr<DailyRollup>> DailyRollup::Create(Database* db, const SeriesMap& series,
                                                         const LocalTime& zone) {
  std::unique_ptr<DailyRollup> daily(new DailyRollup(db, series, zone));
  if (Status s = daily->Prepare(); !s.ok()) return s;
  Result<bool> current = BuiltForZone(*db, zone);
  if (!current.ok()) return current.status();
  if (!*current) {
    if (Status s = daily->Rebuild(); !s.ok()) return s;
  }
  return daily;
}

Status DailyRollup::Prepare() {
  Result<Statement> erase = db_->Prepare("DELETE FROM rollup_day WHERE circuit = ?1 AND day = ?2");
  if (!erase.ok()) return erase.status();
  erase_ = std::move(erase.value());
  // The same sums SumIntoPeriods takes over one circuit's buckets of one period.
  Result<Statement> sum = db_->Prepare(
      "INSERT INTO rollup_day (circuit, day, day_end, real_wh, apparent_vah, min_w, max_w, "
      "coverage_sum, quality) SELECT ?1, ?2, ?3, sum(real_wh), sum(apparent_vah), min(min_w), "
      "max(max_w), sum(coverage), max(quality) FROM rollup "
      "WHERE circuit = ?1 AND bucket >= ?2 AND bucket < ?3 HAVING count(*) > 0");
  if (!sum.ok()) return sum.status();
  sum_ = std::move(sum.value());
  return Status();
}

// Every day that holds a `rollup` row, summed again; runs once per change of zone.
Status DailyRollup::Rebuild() {
  if (Status s = db_->Exec("DELETE FROM rollup_day; DELETE FROM rollup_day_zone",
                           "clear the daily rollup");
      !s.ok()) {
    return s;
  }
  Result<Statement> span = db_->Prepare("SELECT min(bucket), max(bucket) FROM rollup");
  if (!span.ok()) return span.status();
  Result<bool> row = span->Step("find the rollups' span");
  if (!row.ok()) return row.status();
  if (*row && !span->IsNull(0)) {
    const UnixMs last = span->Int(1);
    for (UnixMs t = span->Int(0); t <= last;) {
      Result<TimeRange> day = DayContaining(zone_, t);
      if (!day.ok()) return day.status();
      if (Status s = SumDay(*day); !s.ok()) return s;
      t = day->end_ms;
    }
  }
  Result<Statement> store = db_->Prepare("INSERT INTO rollup_day_zone (zone) VALUES (?1)");
  if (!store.ok()) return store.status();
  store->Bind(1, zone_.zone_name());
  return store->Run("store the daily rollup's zone");
}

void DailyRollup::MarkBucket(UnixMs bucket) {
  if (!last_day_.Contains(bucket)) {
    Result<TimeRange> day = DayContaining(zone_, bucket);
    // A zone whose rules cannot place the bucket: leave the day unmarked; readers of that
    // zone cannot ask for it either (SeriesPeriods fails the same way).
    if (!day.ok()) return;
    last_day_ = *day;
  }
  marked_.emplace(last_day_.start_ms, last_day_.end_ms);
}

Status DailyRollup::Finish() {
  for (const auto& [start, end] : marked_) {
    if (Status s = SumDay({start, end}); !s.ok()) return s;
  }
  marked_.clear();
  return Status();
}

Status DailyRollup::SumDay(const TimeRange& day) {
  for (std::int64_t circuit_id : series_.circuit_ids) {
    erase_.Bind(1, circuit_id);
    erase_.Bind(2, static_cast<std::int64_t>(day.start_ms));
    if (Status s = erase_.Run("erase a daily rollup"); !s.ok()) return s;
    sum_.Bind(1, circuit_id);
    sum_.Bind(2, static_cast<std::int64_t>(day.start_ms));
    sum_.Bind(3, static_cast<std::int64_t>(day.end_ms));
    if (Status s = sum_.Run("sum a daily rollup"); !s.ok()) return s;
  }
  return Status();
}

Status VisitDaysAndBucketsForCircuits(
    const Database& db, const SeriesMap& series, const LocalTime& zone,
    const std::vector<int>& circuit_indexes, UnixMs from_ms, UnixMs to_ms,
    const std::function<void(std::size_t i, const std::vector<CircuitBucket>& elements)>& visit) {
  Result<Statement> buckets = db.Prepare(kSelectBucketsSql);
  if (!buckets.ok()) return buckets.status();
  Result<Statement> days = db.Prepare(kSelectDaysSql);
  if (!days.ok()) return days.status();
  if (Status s = db.Exec("BEGIN", "read rollups"); !s.ok()) return s;
  // The whole local days inside the range: [days_from, days_to), empty when there are none.
  UnixMs days_from = to_ms, days_to = to_ms;
  Result<bool> current = BuiltForZone(db, zone);
  Status status = current.status();
  if (status.ok() && *current && from_ms < to_ms) {
    Result<TimeRange> first = DayContaining(zone, from_ms);
    Result<TimeRange> last = DayContaining(zone, to_ms - 1);
    if (first.ok() && last.ok()) {
      const UnixMs whole_from = first->start_ms == from_ms ? first->start_ms : first->end_ms;
      const UnixMs whole_to = last->end_ms == to_ms ? last->end_ms : last->start_ms;
      if (whole_from < whole_to) {
        days_from = whole_from;
        days_to = whole_to;
      }
    }
  }
  std::vector<CircuitBucket> elements;
  for (std::size_t i = 0; i < circuit_indexes.size() && status.ok(); ++i) {
    const std::int64_t id = series.circuit_ids[circuit_indexes[i]];
    elements.clear();
    status = AppendRollupRows(*buckets, id, from_ms, days_from, &elements);
    if (status.ok()) status = AppendRollupRows(*days, id, days_from, days_to, &elements);
    if (status.ok()) status = AppendRollupRows(*buckets, id, days_to, to_ms, &elements);
    if (status.ok()) visit(i, elements);
  }
  (void)db.Exec("COMMIT", "read rollups");
  return status;
}

Result<std::vector<std::vector<CircuitBucket>>> ReadDaysAndBucketsForCircuits(
    const Database& db, const SeriesMap& series, const LocalTime& zone,
    const std::vector<int>& circuit_indexes, UnixMs from_ms, UnixMs to_ms) {
  std::vector<std::vector<CircuitBucket>> out(circuit_indexes.size());
  Status status = VisitDaysAndBucketsForCircuits(
      db, series, zone, circuit_indexes, from_ms, to_ms,
      [&out](std::size_t i, const std::vector<CircuitBucket>& elements) { out[i] = elements; });
  if (!status.ok()) return status;
  return out;
}

}  // namespace ampledger
