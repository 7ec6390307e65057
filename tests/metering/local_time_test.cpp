// tests/metering/local_time_test.cpp
#include "daemon/metering/local_time.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

using date::operator""_y;

constexpr UnixMs kHourMs = 3'600'000;

LocalTime Zone(const std::string& name) {
  Result<LocalTime> zone = LocalTime::ForZone(name);
  REQUIRE(zone.ok());
  return *zone;
}

UnixMs Utc(date::year_month_day day, int hour, int minute = 0) {
  return date::sys_days{day}.time_since_epoch().count() * 24 * kHourMs + hour * kHourMs +
         minute * 60'000LL;
}

TEST_SUITE("metering") {
  TEST_CASE("an unknown zone is NotFound, not an exception") {
    Result<LocalTime> zone = LocalTime::ForZone("Mars/Olympus_Mons");
    REQUIRE_FALSE(zone.ok());
    CHECK(zone.status().code() == StatusCode::kNotFound);
    CHECK(zone.status().message() == "time zone \"Mars/Olympus_Mons\" is not in the tz database");
  }

  TEST_CASE("an ordinary day is 24 hours and 96 buckets") {
    LocalTime chicago = Zone("America/Chicago");
    CHECK(chicago.zone_name() == "America/Chicago");
    Result<TimeRange> day = chicago.Day(2026_y / 7 / 4);
    REQUIRE(day.ok());
    CHECK(day->start_ms == Utc(2026_y / 7 / 4, 5));
    CHECK(day->DurationMs() == 24 * kHourMs);
    Result<std::vector<UnixMs>> buckets = chicago.DayBuckets(2026_y / 7 / 4);
    REQUIRE(buckets.ok());
    CHECK(buckets->size() == 96);
  }

  TEST_CASE("a billing cycle's name is the month it starts in, YYYY-MM") {
    CHECK(ParseCycleMonth("2026-03") == 2026_y / date::March);
    CHECK(ParseCycleMonth("1970-01") == 1970_y / date::January);
    CHECK(CycleMonthName(2026_y / date::March) == "2026-03");
    for (const char* bad : {"2026-3", "2026-13", "2026-00", "1969-12", "2026/03", "+026-03",
                            "2026-+3", " 2026-03", "2026-03 ", "20260-3", "", "２０２６-03"}) {
      CAPTURE(bad);
      CHECK_FALSE(ParseCycleMonth(bad).has_value());
    }
  }

  TEST_CASE("an invalid date is refused") {
    LocalTime utc = Zone("UTC");
    Result<TimeRange> day = utc.Day(2026_y / 2 / 30);
    REQUIRE_FALSE(day.ok());
    CHECK(day.status().message() == "not a valid date: 2026-02-30");
  }

  TEST_CASE("DST day: a nonexistent local midnight starts the day at the transition") {
    // Cuba moved clocks from 00:00 to 01:00 on 2025-03-09 (tzdata rule Cuba, "Mar Sun>=8 0:00s").
    LocalTime havana = Zone("America/Havana");
    Result<TimeRange> day = havana.Day(2025_y / 3 / 9);
    REQUIRE(day.ok());
    CHECK(day->start_ms == Utc(2025_y / 3 / 9, 5));   // 00:00 CST did not happen; 01:00 CDT
    CHECK(day->end_ms == Utc(2025_y / 3 / 10, 4));
    CHECK(day->DurationMs() == 23 * kHourMs);
    // The day before ends where this one starts: no gap.
    CHECK(havana.Day(2025_y / 3 / 8)->end_ms == day->start_ms);
    LocalMoment first = havana.At(day->start_ms);
    CHECK(first.date == 2025_y / 3 / 9);
    CHECK(first.minute_of_day == 60);
  }

  TEST_CASE("DST day: an ambiguous local midnight starts the day at its first occurrence") {
    // Cuba moved clocks from 01:00 back to 00:00 on 2025-11-02: midnight happened twice.
    LocalTime havana = Zone("America/Havana");
    Result<TimeRange> day = havana.Day(2025_y / 11 / 2);
    REQUIRE(day.ok());
    CHECK(day->start_ms == Utc(2025_y / 11 / 2, 4));
    CHECK(day->end_ms == Utc(2025_y / 11 / 3, 5));
    CHECK(day->DurationMs() == 25 * kHourMs);
    CHECK(havana.Day(2025_y / 11 / 1)->end_ms == day->start_ms);
    // Both occurrences of 00:30 read as the same wall-clock time on the same day.
    CHECK(havana.At(day->start_ms + 30 * 60'000).minute_of_day == 30);
    CHECK(havana.At(day->start_ms + kHourMs + 30 * 60'000).minute_of_day == 30);
    CHECK(havana.At(day->start_ms + kHourMs + 30 * 60'000).date == 2025_y / 11 / 2);
  }

  TEST_CASE("local moment: date, weekday, time of day and offset") {
    LocalTime sydney = Zone("Australia/Sydney");
    // 2026-01-15 23:45 UTC is Friday 2026-01-16 10:45 AEDT (+11).
    LocalMoment moment = sydney.At(Utc(2026_y / 1 / 15, 23, 45));
    CHECK(moment.date == 2026_y / 1 / 16);
    CHECK(moment.weekday == date::Friday);
    CHECK(moment.minute_of_day == 10 * 60 + 45);
    CHECK(moment.utc_offset_seconds == 11 * 3600);
  }

  TEST_CASE("local moment: an instant before 1970 floors to the right minute") {
    LocalMoment moment = Zone("UTC").At(-1);
    CHECK(moment.date == 1969_y / 12 / 31);
    CHECK(moment.minute_of_day == 1439);
  }

  TEST_CASE("month bounds follow local midnights across a DST change") {
    LocalTime new_york = Zone("America/New_York");
    Result<TimeRange> march = new_york.Month(2026_y / 3);
    REQUIRE(march.ok());
    CHECK(march->start_ms == Utc(2026_y / 3 / 1, 5));
    CHECK(march->end_ms == Utc(2026_y / 4 / 1, 4));
    CHECK(march->DurationMs() == (31 * 24 - 1) * kHourMs);
    CHECK(new_york.Month(2026_y / 12)->end_ms == Utc(2027_y / 1 / 1, 5));
  }

  TEST_CASE("billing cycle containing an instant, on and around the cycle day") {
    LocalTime berlin = Zone("Europe/Berlin");
    // 2026-03-15 00:30 local (CET, +1) is 2026-03-14 23:30 UTC: inside the cycle from 03-15.
    Result<BillingCycle> cycle = berlin.CycleContaining(15, Utc(2026_y / 3 / 14, 23, 30));
    REQUIRE(cycle.ok());
    CHECK(cycle->first_day == 2026_y / 3 / 15);
    CHECK(cycle->next_first_day == 2026_y / 4 / 15);
    CHECK(cycle->range.start_ms == Utc(2026_y / 3 / 14, 23));
    CHECK(cycle->range.end_ms == Utc(2026_y / 4 / 14, 22));
    // 31 days with the 23-hour day of 2026-03-29 inside.
    CHECK(cycle->range.DurationMs() == (31 * 24 - 1) * kHourMs);
    // One millisecond earlier is the previous cycle.
    Result<BillingCycle> before = berlin.CycleContaining(15, cycle->range.start_ms - 1);
    REQUIRE(before.ok());
    CHECK(before->first_day == 2026_y / 2 / 15);
    CHECK(before->range.end_ms == cycle->range.start_ms);
  }

  TEST_CASE("billing cycle across the year end, and by name") {
    LocalTime utc = Zone("UTC");
    Result<BillingCycle> cycle = utc.CycleContaining(28, Utc(2027_y / 1 / 3, 12));
    REQUIRE(cycle.ok());
    CHECK(cycle->first_day == 2026_y / 12 / 28);
    CHECK(cycle->next_first_day == 2027_y / 1 / 28);
    Result<BillingCycle> named = utc.CycleStarting(28, 2026_y / 12);
    REQUIRE(named.ok());
    CHECK(named->range == cycle->range);
  }

  TEST_CASE("billing cycle day outside 1..28 is refused") {
    LocalTime utc = Zone("UTC");
    CHECK(utc.CycleContaining(29, 0).status().message() == "billing cycle day 29 is not in 1..28");
    CHECK(utc.CycleStarting(0, 2026_y / 1).status().code() == StatusCode::kInvalidArgument);
  }
}

}  // namespace
}  // namespace ampledger
