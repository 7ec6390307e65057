// tests/api/json_text_test.cpp
// JSON written as text (api/json_text.h) against nlohmann::json's own dump() of the same
// values, byte for byte: the pieces, then the routes that use them, with a row per circuit
// (/v1/live, /v1/energy) or per period (series; series_route_test.cpp checks their points).
#include "api/json_text.h"

#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>

#include "api_fixture.h"

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE("numbers and strings read as dump() writes them") {
    for (double value : {0.0, -0.0, 1.0, -2.5, 0.1, 1e-7, 123456789.125, 1e300, 5e-324,
                         std::numeric_limits<double>::quiet_NaN(),
                         std::numeric_limits<double>::infinity()}) {
      CAPTURE(value);
      std::string text;
      AppendJsonNumber(value, &text);
      CHECK(text == nlohmann::json(value).dump());
    }
    std::string absent;
    AppendJsonNumberOrNull(false, 3.0, &absent);
    CHECK(absent == "null");
    const std::vector<std::string> strings = {
        "", "a-heat", "say \"hi\"", "back\\slash", "tab\there", std::string("nul\0byte", 8),
        "caf\xC3\xA9", "\x7f"};
    for (const std::string& value : strings) {
      CAPTURE(value);
      std::string text;
      AppendJsonString(value, &text);
      CHECK(text == nlohmann::json(value).dump());
    }
  }

  TEST_CASE("an object's members around one written as text, in key order") {
    const nlohmann::json before = {{"a", 1}, {"b", "two"}};
    const nlohmann::json after = {{"y", nullptr}, {"z", {1, 2}}};
    const nlohmann::json empty = nlohmann::json::object();
    const std::string rows = "[{\"n\":1}]";
    const nlohmann::json whole = {{"a", 1}, {"b", "two"}, {"m", {{{"n", 1}}}}, {"y", nullptr},
                                  {"z", {1, 2}}};
    std::string text = OpenObjectUpTo(before, "m");
    text += rows;
    CloseObjectAfter(after, &text);
    CHECK(text == whole.dump());

    std::string alone = OpenObjectUpTo(empty, "m");
    alone += rows;
    CloseObjectAfter(empty, &alone);
    CHECK(alone == "{\"m\":[{\"n\":1}]}");
  }

  TEST_CASE_FIXTURE(ApiFixture, "answers written as text read as dump() of themselves") {
    std::vector<std::string> paths = {
        "/v1/live",
        "/v1/energy?" + kSpringDay,
        "/v1/energy?" + kSpringDay + "&by=unit",
        "/v1/energy?" + kSpringDay + "&by=rate_period",
        "/v1/energy?" + kFallDay,
    };
    paths.insert(paths.end(), kSeriesOfEveryStep.begin(), kSeriesOfEveryStep.end());
    for (const std::string& path : paths) {
      CAPTURE(path);
      httplib::Result result = Get(path, admin);
      REQUIRE(result);
      REQUIRE(result->status == 200);
      const json parsed = json::parse(result->body);
      CHECK(parsed.dump() == result->body);
      const char* rows = parsed.contains("rows")     ? "rows"
                         : parsed.contains("points") ? "points"
                                                     : "circuits";
      CHECK(parsed[rows].size() > 0);
    }
  }
}

}  // namespace
}  // namespace ampledger
