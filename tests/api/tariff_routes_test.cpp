// tests/api/tariff_routes_test.cpp
// /v1/tariff/now and /v1/tariff/periods through the real server, against the fixture's
// invented tariff (tests/api/api_fixture.h) and the machine's IANA tz data for
// America/Chicago: in 2026 clocks go from 02:00 CST to 03:00 CDT on 8 March and back on
// 1 November (the US rule of the Energy Policy Act of 2005, as the tz database has it).
#include "api/tariff_routes.h"

#include <tuple>

#include "api_fixture.h"

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE_FIXTURE(ApiFixture, "tariff now: the period, its quoted price, until when, and next") {
    // Monday noon: off-peak 0.10 plus the 0.02 adder; peak (0.25 + 0.02) from 16:00.
    json now = GetJson("/v1/tariff/now?at=2026-03-09T12:00:00-05:00", unit_a);
    CHECK(now["zone"] == "America/Chicago");
    CHECK(now["currency"] == "USD");
    CHECK(now["tariff"] == "maple-tou");
    CHECK(now["title"] == "Maple Row test time-of-use");
    CHECK(now["at"] == "2026-03-09T12:00:00-05:00");
    CHECK(now["season"] == "all-year");
    CHECK(now["period"] == "off-peak");
    CHECK(now["price_per_kwh"] == 0.12);
    CHECK(now["until"] == "2026-03-09T16:00:00-05:00");
    CHECK(now["next"]["period"] == "peak");
    CHECK(now["next"]["price_per_kwh"] == 0.27);
    CHECK(now["units"]["price_per_kwh"] == "USD/kWh");

    // The spring-forward night: overnight runs from 00:00 CST to 06:00 CDT, five real hours.
    json night = GetJson("/v1/tariff/now?at=2026-03-08T01:30:00-06:00", viewer);
    CHECK(night["period"] == "overnight");
    CHECK(night["price_per_kwh"] == 0.08);
    CHECK(night["until"] == "2026-03-08T06:00:00-05:00");
    CHECK(night["next"]["period"] == "off-peak");

    // New Year's Eve: the next rate is under the tariff in force from 2027-01-01.
    json eve = GetJson("/v1/tariff/now?at=2026-12-31T22:00:00-06:00", admin);
    CHECK(eve["tariff"] == "maple-tou");
    CHECK(eve["period"] == "off-peak");
    CHECK(eve["until"] == "2027-01-01T00:00:00-06:00");
    CHECK(eve["next"]["tariff"] == "maple-tou-2027");
    CHECK(eve["next"]["period"] == "overnight");
    json peak_2027 = GetJson("/v1/tariff/now?at=2027-01-04T17:00:00-06:00", admin);
    CHECK(peak_2027["price_per_kwh"] == 0.32);  // 0.30 + 0.02 under the new tariff

    // A local date is its local midnight; no `at` is now, whatever now is.
    CHECK(GetJson("/v1/tariff/now?at=2026-03-08", viewer)["at"] == "2026-03-08T00:00:00-06:00");
    json current = GetJson("/v1/tariff/now", viewer);
    CHECK(ParseRfc3339(current["at"].get<std::string>()).has_value());
    CHECK(current["until"].is_string());  // a time-of-use tariff always changes within a day
    // Far off dates still answer (tz rules beyond the table repeat the last rule).
    CHECK(GetJson("/v1/tariff/now?at=9999-06-01T12:00:00Z", viewer)["tariff"] ==
          "maple-tou-2027");
  }

  TEST_CASE_FIXTURE(ApiFixture, "tariff periods: merged intervals tile the range, DST included") {
    json answer = GetJson("/v1/tariff/periods?from=2026-03-08&to=2026-03-10", unit_b);
    CHECK(answer["zone"] == "America/Chicago");
    CHECK(answer["currency"] == "USD");
    CHECK(answer["from"] == "2026-03-08T00:00:00-06:00");
    CHECK(answer["to"] == "2026-03-10T00:00:00-05:00");
    // Sunday (a weekend day: no peak), then Monday.
    const std::vector<std::tuple<std::string, std::string, std::string, double>> expected = {
        {"2026-03-08T00:00:00-06:00", "2026-03-08T06:00:00-05:00", "overnight", 0.08},
        {"2026-03-08T06:00:00-05:00", "2026-03-09T00:00:00-05:00", "off-peak", 0.12},
        {"2026-03-09T00:00:00-05:00", "2026-03-09T06:00:00-05:00", "overnight", 0.08},
        {"2026-03-09T06:00:00-05:00", "2026-03-09T16:00:00-05:00", "off-peak", 0.12},
        {"2026-03-09T16:00:00-05:00", "2026-03-09T21:00:00-05:00", "peak", 0.27},
        {"2026-03-09T21:00:00-05:00", "2026-03-10T00:00:00-05:00", "off-peak", 0.12},
    };
    const json& periods = answer["periods"];
    REQUIRE(periods.size() == expected.size());
    for (size_t k = 0; k < expected.size(); ++k) {
      CAPTURE(periods[k].dump());
      CHECK(periods[k]["from"] == std::get<0>(expected[k]));
      CHECK(periods[k]["to"] == std::get<1>(expected[k]));
      CHECK(periods[k]["period"] == std::get<2>(expected[k]));
      CHECK(periods[k]["price_per_kwh"] == std::get<3>(expected[k]));
      CHECK(periods[k]["tariff"] == "maple-tou");
    }
    // Across the tariff change at local midnight each interval names its own tariff.
    json change = GetJson("/v1/tariff/periods?from=2026-12-31T21:00:00-06:00&"
                          "to=2027-01-01T06:00:00-06:00",
                          admin);
    REQUIRE(change["periods"].size() == 2);
    CHECK(change["periods"][0]["tariff"] == "maple-tou");
    CHECK(change["periods"][0]["to"] == "2027-01-01T00:00:00-06:00");
    CHECK(change["periods"][1]["tariff"] == "maple-tou-2027");
    CHECK(change["periods"][1]["period"] == "overnight");
  }

  TEST_CASE_FIXTURE(ApiFixture, "a site without a tariff: 404 on tariff routes, no cost column") {
    HttpConfig http = config.http;
    HttpServer bare(http);
    AddApiRoutes(bare, ApiContext{&config, &series, config.storage.path, writer.get(), &stats,
                                  receiver.get()});
    REQUIRE(bare.Start().ok());
    httplib::Client other("127.0.0.1", bare.port());
    const httplib::Headers headers = {{"Authorization", "Bearer " + admin}};
    for (const char* path : {"/v1/tariff/now", "/v1/tariff/periods?from=2026-03-08&to=2026-03-09",
                             "/v1/cycles/current", "/v1/units/a/statements/2026-03",
                             "/v1/bills/2026-03"}) {
      CAPTURE(path);
      httplib::Result result = other.Get(path, headers);
      REQUIRE(result);
      CHECK(result->status == 404);
      CHECK(ProblemOf(result)["detail"] ==
            "the site has no tariff (site.tariff in the config), so nothing is priced");
    }
    httplib::Result energy = other.Get("/v1/energy?" + kSpringDay, headers);
    REQUIRE(energy);
    json body = json::parse(energy->body);
    CHECK_FALSE(body.contains("currency"));
    CHECK_FALSE(body["rows"][0].contains("cost"));
    httplib::Result by_period = other.Get("/v1/energy?" + kSpringDay + "&by=rate_period", headers);
    REQUIRE(by_period);
    CHECK(by_period->status == 400);
    CHECK(ProblemOf(by_period)["detail"] ==
          "query parameter \"by\": rate_period needs a site tariff (site.tariff in the config), "
          "and this site has none");
    bare.Stop();
  }
}

}  // namespace
}  // namespace ampledger
