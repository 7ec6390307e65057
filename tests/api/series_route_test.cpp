// tests/api/series_route_test.cpp
// The series route's points, written as text (api/series_route.cpp AppendPointsJson): every
// member for circuits and units, days with and without data, and every step that has
// periods. json_text_test.cpp holds the text to nlohmann's own dump of it, byte for byte;
// the values are checked against the storage rollups in api_routes_test.cpp.
#include "api/series_route.h"

#include <doctest/doctest.h>

#include <nlohmann/json.hpp>

#include "api_fixture.h"

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE_FIXTURE(ApiFixture, "a series' points have every member, null where no data") {
    int nulls = 0;
    for (const std::string& path : kSeriesOfEveryStep) {
      CAPTURE(path);
      const json parsed = GetJson(path, admin);
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
