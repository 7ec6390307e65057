// tests/reference/tz_reference_test.cpp
// Local calendar arithmetic checked against the IANA tz database: the published day lengths
// and transitions in tests/reference/data/tz (tzdata 2025b via zdump and glibc, see its
// SOURCES.md), and the whole database installed on this machine.
#include <doctest/doctest.h>

#include <chrono>
#include <cstdio>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include <date/tz.h>

#include "daemon/metering/local_time.h"
#include "test_util.h"

namespace ampledger {
namespace {

std::vector<std::vector<std::string>> ReadCsv(const std::string& name) {
  std::istringstream text(testing::ReadFile(testing::ReferenceDir() / "tz" / name));
  std::vector<std::vector<std::string>> rows;
  std::string line;
  std::getline(text, line);  // header
  while (std::getline(text, line)) {
    if (line.empty()) continue;
    std::vector<std::string> fields;
    std::istringstream cells(line);
    std::string cell;
    while (std::getline(cells, cell, ',')) fields.push_back(cell);
    rows.push_back(fields);
  }
  return rows;
}

date::year_month_day ParseDate(const std::string& text) {
  int y = 0;
  unsigned m = 0, d = 0;
  REQUIRE(std::sscanf(text.c_str(), "%d-%u-%u", &y, &m, &d) == 3);
  return date::year{y} / date::month{m} / date::day{d};
}

// "2026-03-08T05:00:00Z" -> UnixMs.
UnixMs ParseUtc(const std::string& text) {
  int y = 0;
  unsigned mo = 0, d = 0, h = 0, mi = 0, s = 0;
  REQUIRE(std::sscanf(text.c_str(), "%d-%u-%uT%u:%u:%uZ", &y, &mo, &d, &h, &mi, &s) == 6);
  date::sys_days day{date::year{y} / date::month{mo} / date::day{d}};
  return (day.time_since_epoch().count() * 86400 + h * 3600 + mi * 60 + s) * kMsPerSecond;
}

// "-05:00" -> seconds.
int ParseOffset(const std::string& text) {
  unsigned h = 0, m = 0;
  REQUIRE(std::sscanf(text.c_str() + 1, "%u:%u", &h, &m) == 2);
  int seconds = static_cast<int>(h * 3600 + m * 60);
  return text[0] == '-' ? -seconds : seconds;
}

// "2026-03-08T03:00:00-04:00" -> the local date and minute of day it shows.
void ParseLocal(const std::string& text, date::year_month_day* day, int* minute_of_day) {
  unsigned h = 0, m = 0;
  REQUIRE(std::sscanf(text.c_str() + 11, "%u:%u", &h, &m) == 2);
  *day = ParseDate(text.substr(0, 10));
  *minute_of_day = static_cast<int>(h * 60 + m);
}

LocalTime Zone(const std::string& name) {
  Result<LocalTime> zone = LocalTime::ForZone(name);
  REQUIRE_MESSAGE(zone.ok(), zone.status().ToString());
  return *zone;
}

TEST_SUITE("reference") {
  // Source: tests/reference/data/tz/local-day-hours-2026.csv (tzdata 2025b; glibc `date` and
  // Python zoneinfo agree, per tests/reference/data/tz/SOURCES.md). Each row: the UTC instants
  // of the two local midnights bounding the day, and its length in hours.
  TEST_CASE("local-day-hours-2026.csv: day bounds and hours composed from 15-minute buckets") {
    std::vector<std::vector<std::string>> rows = ReadCsv("local-day-hours-2026.csv");
    REQUIRE(rows.size() == 12);
    for (const std::vector<std::string>& row : rows) {
      REQUIRE(row.size() == 6);
      CAPTURE(row[0]);
      CAPTURE(row[1]);
      LocalTime zone = Zone(row[0]);
      date::year_month_day day = ParseDate(row[1]);
      Result<TimeRange> range = zone.Day(day);
      REQUIRE(range.ok());
      CHECK(range->start_ms == ParseUtc(row[4]));
      CHECK(range->end_ms == ParseUtc(row[5]));

      Result<std::vector<UnixMs>> buckets = zone.DayBuckets(day);
      REQUIRE(buckets.ok());
      int hours = std::stoi(row[3]);
      CHECK(buckets->size() == static_cast<std::size_t>(hours * 4));
      CHECK(buckets->front() == range->start_ms);
      CHECK(buckets->back() + kMsPerBucket == range->end_ms);
      CHECK(static_cast<UnixMs>(buckets->size()) * kMsPerBucket == UnixMs{hours} * 3'600'000);
    }
  }

  // Source: tests/reference/data/tz/dst-transitions.csv (tzdata 2025b, `zdump -v`): the UTC
  // offset just before and at each transition instant, the wall clock either side, and the
  // length of the local day it falls on.
  TEST_CASE("dst-transitions.csv: offsets before and after each transition") {
    std::vector<std::vector<std::string>> rows = ReadCsv("dst-transitions.csv");
    REQUIRE(rows.size() == 30);
    for (const std::vector<std::string>& row : rows) {
      REQUIRE(row.size() == 12);
      CAPTURE(row[0]);
      CAPTURE(row[1]);
      LocalTime zone = Zone(row[0]);
      UnixMs instant = ParseUtc(row[1]);
      LocalMoment before = zone.At(instant - 1);
      LocalMoment after = zone.At(instant);
      CHECK(before.utc_offset_seconds == ParseOffset(row[5]));
      CHECK(after.utc_offset_seconds == ParseOffset(row[8]));
      CHECK((after.utc_offset_seconds - before.utc_offset_seconds) / 60 == std::stoi(row[9]));

      date::year_month_day local_day;
      int minute = 0;
      ParseLocal(row[6], &local_day, &minute);
      CHECK(after.date == local_day);
      CHECK(after.minute_of_day == minute);
      // local_before is the instant read on the old offset: one millisecond earlier shows the
      // minute before it.
      ParseLocal(row[3], &local_day, &minute);
      CHECK(before.minute_of_day == minute - 1);

      Result<TimeRange> day = zone.Day(ParseDate(row[10]));
      REQUIRE(day.ok());
      CHECK(day->DurationMs() == std::stoi(row[11]) * 3'600'000LL);
    }
  }

  // Source: the IANA tz database installed on this machine (/usr/share/zoneinfo, read by
  // date/tz), every zone it lists. Every UTC offset in force from 1980-01-01 to 2100 is a whole
  // number of quarter hours, so local days compose from 15-minute UTC buckets.
  TEST_CASE("tzdata on this machine: every offset since 1980 is a multiple of 15 minutes") {
    const date::tzdb& db = date::get_tzdb();
    REQUIRE(db.zones.size() > 300);
    const date::sys_seconds from{date::sys_days{date::year{1980} / 1 / 1}.time_since_epoch()};
    const date::sys_seconds until{date::sys_days{date::year{2100} / 1 / 1}.time_since_epoch()};
    std::set<std::string> off_grid;
    for (const date::time_zone& zone : db.zones) {
      for (date::sys_seconds t = from; t < until;) {
        date::sys_info info = zone.get_info(t);
        if (info.offset.count() % 900 != 0) off_grid.insert(zone.name());
        if (info.end <= t) break;
        t = info.end;
      }
    }
    std::string names;
    for (const std::string& name : off_grid) names += name + " ";
    CHECK_MESSAGE(off_grid.empty(), "zones with an offset off the quarter hour: " << names);
  }

  // Same source. Offsets alone do not settle where a day starts when midnight itself is skipped
  // or repeated, and some zones changed clocks at 00:01 local (Atlantic Canada and
  // Newfoundland 1987-2010, also Gaza, Hebron, Antarctica/Casey): transition instants off the
  // quarter hour. So check every local day that holds a transition since 1980, and its
  // neighbours, in every zone: its bounds fall on 15-minute UTC boundaries (DayBuckets works).
  TEST_CASE("tzdata on this machine: every local day with a transition since 1980 fits buckets") {
    const date::tzdb& db = date::get_tzdb();
    const date::sys_seconds from{date::sys_days{date::year{1980} / 1 / 1}.time_since_epoch()};
    const date::sys_seconds until{date::sys_days{date::year{2100} / 1 / 1}.time_since_epoch()};
    std::set<std::string> failures;
    int days_checked = 0;
    for (const date::time_zone& tz : db.zones) {
      LocalTime zone = Zone(tz.name());
      for (date::sys_seconds t = from; t < until;) {
        date::sys_info info = tz.get_info(t);
        if (info.end <= t || info.end >= until) break;
        UnixMs transition_ms = info.end.time_since_epoch().count() * kMsPerSecond;
        date::local_days day{zone.At(transition_ms).date};
        for (int delta = -1; delta <= 1; ++delta) {
          date::year_month_day local{day + date::days{delta}};
          ++days_checked;
          if (!zone.DayBuckets(local).ok()) {
            failures.insert(tz.name() + " " + date::format("%F", local));
          }
        }
        t = info.end;
      }
    }
    std::string names;
    for (const std::string& failure : failures) names += failure + "; ";
    CHECK(days_checked > 10'000);  // the database really has its transitions since 1980
    CHECK_MESSAGE(failures.empty(), "local days off the 15-minute grid: " << names);
  }
}

}  // namespace
}  // namespace ampledger
