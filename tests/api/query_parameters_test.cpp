// tests/api/query_parameters_test.cpp
// Range bounds as RFC 3339 times or local dates, known parameters, and JSON or CSV.
#include "api/query_parameters.h"

#include <doctest/doctest.h>

#include "api/rfc3339.h"

namespace ampledger {
namespace {

HttpRequest WithQuery(std::multimap<std::string, std::string> query) {
  HttpRequest request;
  request.query = std::move(query);
  return request;
}

TEST_SUITE("api") {
  TEST_CASE("ParseTimeParameter: local dates are the local midnight of the site's zone") {
    const LocalTime chicago = LocalTime::ForZone("America/Chicago").value();
    // IANA tz: America/Chicago is UTC-6 until 2026-03-08 02:00 local, then UTC-5.
    CHECK(ParseTimeParameter(WithQuery({{"from", "2026-03-08"}}), "from", chicago).value() ==
          ParseRfc3339("2026-03-08T06:00:00Z").value());
    CHECK(ParseTimeParameter(WithQuery({{"to", "2026-03-09"}}), "to", chicago).value() ==
          ParseRfc3339("2026-03-09T05:00:00Z").value());
    // IANA tz: America/Sao_Paulo moved clocks from 00:00 to 01:00 on 2018-11-04, so that
    // day's first moment is 01:00 local, 03:00 UTC.
    const LocalTime sao_paulo = LocalTime::ForZone("America/Sao_Paulo").value();
    CHECK(ParseTimeParameter(WithQuery({{"from", "2018-11-04"}}), "from", sao_paulo).value() ==
          ParseRfc3339("2018-11-04T03:00:00Z").value());
    // An RFC 3339 time is taken as it is, whatever the zone.
    CHECK(ParseTimeParameter(WithQuery({{"from", "2026-03-08T00:15:00Z"}}), "from", chicago)
              .value() == ParseRfc3339("2026-03-08T00:15:00Z").value());

    for (const char* text : {"2026-02-29", "2026-13-01", "2026-3-08", "20260308", "2026-03-08 ",
                             "2026-03-08T00:00", "+2026-03-08", "2026-03-0x", ""}) {
      CAPTURE(text);
      Result<UnixMs> parsed = ParseTimeParameter(WithQuery({{"from", text}}), "from", chicago);
      REQUIRE_FALSE(parsed.ok());
      CHECK(parsed.status().message() ==
            std::string("query parameter \"from\": \"") + text +
                "\" is neither an RFC 3339 time with a UTC offset (e.g. "
                "2026-03-08T00:00:00-06:00) nor a local date (e.g. 2026-03-08)");
    }
    CHECK(ParseTimeParameter(WithQuery({}), "to", chicago).status().message() ==
          "query parameter \"to\": required, an RFC 3339 time with a UTC offset or a local "
          "date (YYYY-MM-DD)");
  }

  TEST_CASE("CheckParameters and WantsCsv name the parameter that is wrong") {
    CHECK(CheckParameters(WithQuery({{"from", "x"}, {"by", "unit"}}), {"from", "by"}).ok());
    CHECK(CheckParameters(WithQuery({{"limit", "5"}}), {"from", "to"}).message() ==
          "query parameter \"limit\": not known here (from, to)");
    CHECK(CheckParameters(WithQuery({{"to", "a"}, {"to", "b"}}), {"from", "to"}).message() ==
          "query parameter \"to\": given more than once");

    CHECK(WantsCsv(WithQuery({{"format", "csv"}})).value());
    CHECK_FALSE(WantsCsv(WithQuery({{"format", "json"}})).value());
    HttpRequest accept_csv;
    accept_csv.accept = "text/csv, application/json;q=0.5";
    CHECK(WantsCsv(accept_csv).value());
    CHECK_FALSE(WantsCsv(HttpRequest{}).value());
    CHECK(WantsCsv(WithQuery({{"format", "xml"}})).status().message() ==
          "query parameter \"format\": \"xml\" is not json or csv");
  }
}

}  // namespace
}  // namespace ampledger
