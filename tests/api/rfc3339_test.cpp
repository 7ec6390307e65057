// tests/api/rfc3339_test.cpp
#include "api/rfc3339.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE("ParseRfc3339 reads the examples of RFC 3339 section 5.8") {
    // Expected instants computed with Python's datetime (a general-purpose reference library).
    CHECK(ParseRfc3339("1985-04-12T23:20:50.52Z") == 482196050520);
    CHECK(ParseRfc3339("1996-12-19T16:39:57-08:00") == 851042397000);
    CHECK(ParseRfc3339("1937-01-01T12:00:27.87+00:20") == -1041337172130);
    // Section 5.8's leap second is a valid RFC 3339 time, but UnixMs has no leap seconds.
    CHECK_FALSE(ParseRfc3339("1990-12-31T23:59:60Z").has_value());
    // Section 5.6 allows lower-case t and z.
    CHECK(ParseRfc3339("1985-04-12t23:20:50.52z") == 482196050520);
  }

  TEST_CASE("ParseRfc3339 refuses what is not a full date-time with offset") {
    for (const char* bad :
         {"", "2026-03-08", "2026-03-08T00:00:00", "2026-03-08 00:00:00Z", "2026-3-08T00:00:00Z",
          "2026-13-01T00:00:00Z", "2026-02-29T00:00:00Z", "2026-04-31T00:00:00Z",
          "2026-03-08T24:00:00Z", "2026-03-08T00:60:00Z", "2026-03-08T00:00:00+24:00",
          "2026-03-08T00:00:00+05", "2026-03-08T00:00:00.Z", "2026-03-08T00:00:00.1234Z",
          "2026-03-08T00:00:00Z ", " 2026-03-08T00:00:00Z", "2026-03-08T00:00:00Zjunk",
          "1772953200000", "2026-03-08T00:00:00-06:00'; DROP TABLE rollup;--"}) {
      CAPTURE(bad);
      CHECK_FALSE(ParseRfc3339(bad).has_value());
    }
    CHECK(ParseRfc3339("2024-02-29T00:00:00Z").has_value());  // a leap day
  }

  TEST_CASE("FormatLocalRfc3339 writes the site's wall clock and offset") {
    LocalTime chicago = LocalTime::ForZone("America/Chicago").value();
    // IANA tz: America/Chicago is UTC-6 in winter, UTC-5 from 2026-03-08 02:00 local (US
    // Energy Policy Act of 2005: second Sunday of March).
    CHECK(FormatLocalRfc3339(chicago, *ParseRfc3339("2026-03-08T06:00:00Z")) ==
          "2026-03-08T00:00:00-06:00");
    CHECK(FormatLocalRfc3339(chicago, *ParseRfc3339("2026-03-08T08:00:00Z")) ==
          "2026-03-08T03:00:00-05:00");
    CHECK(FormatLocalRfc3339(chicago, *ParseRfc3339("2026-03-08T08:00:01.250Z")) ==
          "2026-03-08T03:00:01.250-05:00");
    LocalTime utc = LocalTime::ForZone("UTC").value();
    CHECK(FormatLocalRfc3339(utc, 0) == "1970-01-01T00:00:00Z");
    CHECK(FormatLocalRfc3339(utc, -1) == "1969-12-31T23:59:59.999Z");
    CHECK(FormatLocalRfc3339(utc, *ParseRfc3339("9999-12-31T23:59:59.007Z")) ==
          "9999-12-31T23:59:59.007Z");
    LocalTime kathmandu = LocalTime::ForZone("Asia/Kathmandu").value();  // IANA tz: UTC+05:45
    CHECK(FormatLocalRfc3339(kathmandu, *ParseRfc3339("2026-07-01T18:15:00Z")) ==
          "2026-07-02T00:00:00+05:45");
    LocalTime kolkata = LocalTime::ForZone("Asia/Kolkata").value();  // IANA tz: UTC+05:30
    CHECK(FormatLocalRfc3339(kolkata, 0) == "1970-01-01T05:30:00+05:30");
    for (const char* text : {"2026-11-01T01:30:00-05:00", "2026-11-01T01:30:00-06:00"}) {
      CHECK(FormatLocalRfc3339(chicago, *ParseRfc3339(text)) == text);  // the repeated hour
    }
  }

  // Found by tests/fuzz/api_parameters_fuzz.cpp: a time read back from an answer must be the
  // time that was asked for, in any zone and year.
  TEST_CASE("FormatLocalRfc3339 writes local mean time and the year edges in UTC") {
    // IANA tz: Europe/Dublin kept Dublin Mean Time, UTC-00:25:21, until 1916.
    LocalTime dublin = LocalTime::ForZone("Europe/Dublin").value();
    const UnixMs early = *ParseRfc3339("0026-04-05T03:00:00+11:00");
    CHECK(FormatLocalRfc3339(dublin, early) == "0026-04-04T16:00:00Z");
    CHECK(ParseRfc3339(FormatLocalRfc3339(dublin, early)) == early);
    LocalTime chicago = LocalTime::ForZone("America/Chicago").value();
    const UnixMs first = *ParseRfc3339("0000-01-01T00:00:00Z");
    CHECK(FormatLocalRfc3339(chicago, first) == "0000-01-01T00:00:00Z");
    // Times no UTC date-time of years 0000-9999 can state are refused.
    CHECK_FALSE(ParseRfc3339("0000-01-01T00:30:00+01:00").has_value());
    CHECK_FALSE(ParseRfc3339("9999-12-31T23:30:00-01:00").has_value());
    CHECK(ParseRfc3339("9999-12-31T23:59:59.999Z").has_value());
  }
}

}  // namespace
}  // namespace ampledger
