// tests/api/series_route_test.cpp
// The series route's JSON text. Its points are written by hand (api/series_route.cpp
// PointsJson) rather than built as nlohmann::json values; these tests hold the text to
// nlohmann's own dump of the same document, byte for byte, for circuits and units, days with
// and without data, and every step that has periods. (The values are checked against the
// storage rollups in api_routes_test.cpp.)
#include "api/series_route.h"

#include <doctest/doctest.h>

#include <nlohmann/json.hpp>

#include "api_fixture.h"

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE_FIXTURE(ApiFixture, "a series' JSON text is nlohmann::json's dump of itself") {
    const std::vector<std::string> paths = {
        "/v1/circuits/a-heat/series?" + kSpringDay + "&step=hour",
        "/v1/circuits/a-heat/series?" + kSpringDay + "&step=15m",
        "/v1/units/a/series?" + kFallDay + "&step=hour",
        // March: b-heat has readings on 3 of its days, so most points have no data (null
        // min_w, max_w and quality).
        "/v1/circuits/b-heat/series?from=2026-03-01T00:00:00-06:00&to=2026-04-01T00:00:00-05:00"
        "&step=day",
        "/v1/units/b/series?from=2026-03-01T00:00:00-06:00&to=2026-05-01T00:00:00-05:00"
        "&step=month",
    };
    int nulls = 0;
    for (const std::string& path : paths) {
      CAPTURE(path);
      httplib::Result result = Get(path, admin);
      REQUIRE(result);
      REQUIRE(result->status == 200);
      const json parsed = json::parse(result->body);
      CHECK(parsed.dump() == result->body);
      CHECK(parsed["points"].size() > 0);
      for (const json& point : parsed["points"]) {
        CHECK(point.size() == 9);
        if (point["quality"].is_null()) {
          ++nulls;
          CHECK(point["min_w"].is_null());
          CHECK(point["max_w"].is_null());
        }
      }
    }
    CHECK(nulls > 0);  // the March day series has days without data
  }
}

}  // namespace
}  // namespace ampledger
