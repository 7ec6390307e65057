// storage/main_meter_intervals.cpp
#include "storage/main_meter_intervals.h"

#include <cmath>

#include <date/date.h>

namespace ampledger {
namespace {

std::string UtcText(UnixMs instant) {
  using namespace std::chrono;
  return date::format("%FT%TZ", floor<seconds>(sys_time<milliseconds>(milliseconds(instant))));
}

std::string Describe(TimeRange span) {
  return "interval " + UtcText(span.start_ms) + " to " + UtcText(span.end_ms);
}

std::string WhText(double wh) {
  char text[32];
  std::snprintf(text, sizeof text, "%.10g Wh", wh);
  return text;
}

Result<IntervalImport> ImportChecked(const Database& db,
                                     const std::vector<MeterInterval>& intervals,
                                     const std::string& source, UnixMs added_ms, bool replace) {
  // Stored intervals overlapping [?1, ?2); none is longer than kMaxMeterIntervalMs, which
  // bounds the scan of the primary key.
  Result<Statement> overlapping = db.Prepare(
      "SELECT start_ms, end_ms, wh, source FROM main_meter_interval "
      "WHERE start_ms < ?2 AND start_ms > ?1 - ?3 AND end_ms > ?1");
  Result<Statement> insert = db.Prepare(
      "INSERT OR REPLACE INTO main_meter_interval (start_ms, end_ms, wh, source, added_ms) "
      "VALUES (?1, ?2, ?3, ?4, ?5)");
  if (!overlapping.ok()) return overlapping.status();
  if (!insert.ok()) return insert.status();
  IntervalImport result;
  for (const MeterInterval& interval : intervals) {
    overlapping->Reset();
    overlapping->Bind(1, static_cast<std::int64_t>(interval.span.start_ms));
    overlapping->Bind(2, static_cast<std::int64_t>(interval.span.end_ms));
    overlapping->Bind(3, static_cast<std::int64_t>(kMaxMeterIntervalMs));
    bool same = false;
    bool replacing = false;
    for (;;) {
      Result<bool> row = overlapping->Step("find overlapping main meter intervals");
      if (!row.ok()) return row.status();
      if (!row.value()) break;
      const TimeRange stored{overlapping->Int(0), overlapping->Int(1)};
      const double stored_wh = overlapping->Double(2);
      const std::string where = " stored from " + std::string(overlapping->Text(3));
      if (stored.start_ms != interval.span.start_ms || stored.end_ms != interval.span.end_ms) {
        return Status::InvalidArgument(Describe(interval.span) + " overlaps the " +
                                       Describe(stored) + where);
      }
      if (std::fabs(stored_wh - interval.wh) <= 1e-9 * std::max(1.0, stored_wh)) {
        same = true;
      } else if (!replace) {
        return Status::InvalidArgument(Describe(interval.span) + ": " + WhText(interval.wh) +
                                       ", but " + WhText(stored_wh) + " is" + where +
                                       " (replace takes the new value)");
      } else {
        replacing = true;
      }
    }
    if (same) {
      ++result.unchanged;
      continue;
    }
    insert->Reset();
    insert->Bind(1, static_cast<std::int64_t>(interval.span.start_ms));
    insert->Bind(2, static_cast<std::int64_t>(interval.span.end_ms));
    insert->Bind(3, interval.wh);
    insert->Bind(4, std::string_view(source));
    insert->Bind(5, static_cast<std::int64_t>(added_ms));
    if (Status s = insert->Run("store main meter interval"); !s.ok()) return s;
    ++(replacing ? result.replaced : result.added);
  }
  return result;
}

}  // namespace

Result<IntervalImport> ImportMainMeterIntervals(const Database& db,
                                                std::vector<MeterInterval> intervals,
                                                const std::string& source, UnixMs added_ms,
                                                bool replace) {
  if (Status s = CheckMeterIntervals(intervals); !s.ok()) return s;
  const char* what = "import main meter intervals";
  if (Status s = db.Exec("BEGIN IMMEDIATE", what); !s.ok()) return s;
  Result<IntervalImport> result = ImportChecked(db, intervals, source, added_ms, replace);
  Status s = result.ok() ? db.Exec("COMMIT", what) : result.status();
  if (!s.ok()) {
    (void)db.Exec("ROLLBACK", what);
    return s;
  }
  return result;
}

Result<std::vector<MeterInterval>> ReadMainMeterIntervals(const Database& db, TimeRange range) {
  Result<Statement> select = db.Prepare(
      "SELECT start_ms, end_ms, wh FROM main_meter_interval "
      "WHERE start_ms < ?2 AND start_ms > ?1 - ?3 AND end_ms > ?1 ORDER BY start_ms");
  if (!select.ok()) return select.status();
  select->Bind(1, static_cast<std::int64_t>(range.start_ms));
  select->Bind(2, static_cast<std::int64_t>(range.end_ms));
  select->Bind(3, static_cast<std::int64_t>(kMaxMeterIntervalMs));
  std::vector<MeterInterval> intervals;
  for (;;) {
    Result<bool> row = select->Step("read main meter intervals");
    if (!row.ok()) return row.status();
    if (!row.value()) break;
    intervals.push_back({{select->Int(0), select->Int(1)}, select->Double(2)});
  }
  return intervals;
}

}  // namespace ampledger
