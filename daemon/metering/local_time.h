// daemon/metering/local_time.h
// LocalTime maps between UTC instants (UnixMs) and the local calendar of one IANA time zone:
// the UTC bounds of a local day, month and billing cycle, the 15-minute UTC buckets a local
// day is made of, and the local date, weekday and time of day of an instant. The zone rules
// are the machine's tz database (/usr/share/zoneinfo), read through Howard Hinnant's date/tz.
// A LocalTime is immutable and cheap to copy; any thread may call it.
//
// Local midnights that do not exist or exist twice. Every bound is the start of a local day,
// found with date/tz's choose::earliest:
//  - a nonexistent midnight (clocks jump forward over 00:00) maps to the transition instant,
//    the first moment of that local day that does exist;
//  - an ambiguous midnight (clocks fall back across 00:00) maps to its first occurrence, so the
//    repeated hour belongs to the day it reads as, and that day is 25 hours long.
// Because the end of one day is the start of the next with the same rule, local days tile the
// UTC time line with no gap and no overlap, and so do months and billing cycles.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <date/date.h>

#include "config/status.h"
#include "daemon/metering/reading.h"

namespace date {
class time_zone;
}

namespace ampledger {

// [start_ms, end_ms) in UTC.
struct TimeRange {
  UnixMs start_ms = 0;
  UnixMs end_ms = 0;
  UnixMs DurationMs() const { return end_ms - start_ms; }
  bool Contains(UnixMs instant) const { return start_ms <= instant && instant < end_ms; }
  bool operator==(const TimeRange&) const = default;
};

// One billing cycle: from local midnight of `first_day` to local midnight of `next_first_day`.
struct BillingCycle {
  date::year_month_day first_day;
  date::year_month_day next_first_day;
  TimeRange range;
};

// A billing cycle's name: the month it starts in, "YYYY-MM" (`ampledger statement --cycle`,
// the API's {cycle}). Parse: exactly four digits, "-", two digits; 1970-01 or later; else
// nullopt.
std::optional<date::year_month> ParseCycleMonth(std::string_view text);
std::string CycleMonthName(date::year_month month);

// What a local clock and calendar show at one instant.
struct LocalMoment {
  date::year_month_day date;
  date::weekday weekday;
  int minute_of_day = 0;       // 0..1439, wall clock: 01:30 occurs twice on a 25-hour day
  int utc_offset_seconds = 0;  // local = UTC + offset
};

class LocalTime {
 public:
  // Looks up `zone_name` ("America/Chicago") in the machine's tz database. NotFound names
  // the zone when it is unknown; Unavailable when the tz database cannot be read.
  static Result<LocalTime> ForZone(const std::string& zone_name);

  const std::string& zone_name() const;

  // The UTC bounds of local day `day`: 24 hours, or 23 / 25 on a DST change. InvalidArgument
  // when `day` is not a valid date.
  Result<TimeRange> Day(date::year_month_day day) const;

  // The UTC bounds of local month `month` (first to first, local midnights).
  Result<TimeRange> Month(date::year_month month) const;

  // The billing cycle that starts on day `cycle_day` (1..28) of a month and contains
  // `instant`. InvalidArgument when cycle_day is out of range.
  Result<BillingCycle> CycleContaining(int cycle_day, UnixMs instant) const;

  // The billing cycle that starts on day `cycle_day` (1..28) of `month` ("the 2026-03 cycle").
  Result<BillingCycle> CycleStarting(int cycle_day, date::year_month month) const;

  // The starts of the 15-minute UTC buckets (kMsPerBucket) that make up local day `day`, in
  // order: 96, or 92 / 100 on a DST change. The day's bounds must fall on bucket boundaries,
  // which holds for every zone since 1980 (tests/reference/tz_reference_test.cpp checks the
  // machine's whole database); otherwise InvalidArgument names the zone, day and offset,
  // rather than returning buckets that would spill into a neighbouring day.
  Result<std::vector<UnixMs>> DayBuckets(date::year_month_day day) const;

  // The local date, weekday, time of day and UTC offset at `instant`.
  LocalMoment At(UnixMs instant) const;

 private:
  explicit LocalTime(const date::time_zone* zone) : zone_(zone) {}

  UnixMs StartOfDay(date::local_days day) const;

  const date::time_zone* zone_;  // owned by date/tz's database, which lives until exit
};

}  // namespace ampledger
