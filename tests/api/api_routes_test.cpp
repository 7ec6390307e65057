// tests/api/api_routes_test.cpp
// The API through a real HttpServer on 127.0.0.1 over a real SQLite file fed through the
// ReadingWriter: who may see what (every route under every scope), bad inputs, and series
// energy against the storage rollups.
#include "api/api_routes.h"

#include <doctest/doctest.h>
#include <httplib.h>

#include <array>
#include <map>
#include <regex>
#include <set>
#include <nlohmann/json.hpp>

#include "api_fixture.h"
#include "openapi_routes.h"

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE_FIXTURE(ApiFixture, "authorization matrix: every route under every scope") {
    struct Row {
      std::string path;
      int admin, viewer, unit_a, unit_b;  // expected status; no token is always 401
    };
    const std::string q = "?" + kSpringDay + "&step=day";
    const std::vector<Row> rows = {
        {"/v1/site", 200, 200, 404, 404},
        {"/v1/nodes", 200, 200, 404, 404},
        {"/metrics", 200, 200, 404, 404},
        {"/v1/live", 200, 200, 200, 200},
        {"/v1/circuits", 200, 200, 200, 200},
        {"/v1/units", 200, 200, 200, 200},
        {"/v1/circuits/a-heat/series" + q, 200, 200, 200, 404},
        {"/v1/circuits/a-kitchen/series" + q, 200, 200, 200, 404},
        {"/v1/circuits/b-heat/series" + q, 200, 200, 404, 200},
        {"/v1/circuits/hall/series" + q, 200, 200, 404, 404},
        {"/v1/units/a/series" + q, 200, 200, 200, 404},
        {"/v1/units/b/series" + q, 200, 200, 404, 200},
        {"/v1/energy?" + kSpringDay, 200, 200, 200, 200},
        {"/v1/energy?" + kSpringDay + "&by=rate_period", 200, 200, 200, 200},
        // Prices are the same for everyone; a unit token asks about its own unit only.
        {"/v1/tariff/now", 200, 200, 200, 200},
        {"/v1/tariff/periods?" + kSpringDay, 200, 200, 200, 200},
        {"/v1/cycles/current", 200, 200, 200, 200},
        {"/v1/cycles/current?unit=a", 200, 200, 200, 404},
        {"/v1/cycles/current?unit=b", 200, 200, 404, 200},
        {"/v1/units/a/statements/2026-03", 200, 200, 200, 404},
        {"/v1/units/a/statements/2026-03?format=html", 200, 200, 200, 404},
        {"/v1/units/b/statements/2026-03?format=csv", 200, 200, 404, 200},
        {"/v1/bills/2026-03", 200, 200, 404, 404},
        {"/v1/main-meter/reads?from=2026-01-01&to=2026-12-01", 200, 200, 404, 404},
    };
    for (const Row& row : rows) {
      struct Case {
        const char* scope;
        const std::string& token;
        int expected;
      };
      const Case cases[] = {{"admin", admin, row.admin}, {"viewer", viewer, row.viewer},
                            {"unit:a", unit_a, row.unit_a}, {"unit:b", unit_b, row.unit_b}};
      for (const auto& [scope, token, expected] : cases) {
        CAPTURE(row.path);
        CAPTURE(scope);
        httplib::Result result = Get(row.path, token);
        REQUIRE(result);
        CHECK(result->status == expected);
        if (expected == 404) {
          // Hidden looks exactly like absent: the same problem as an unknown path or id.
          json problem = ProblemOf(result);
          const std::string detail = problem["detail"];
          const bool by_id = row.path.find("/series") != std::string::npos ||
                             row.path.find("/statements/") != std::string::npos ||
                             row.path.find("unit=") != std::string::npos;
          CHECK((detail.rfind(by_id ? "no unit" : "no resource at ", 0) == 0 ||
                 detail.rfind("no circuit", 0) == 0));
        }
      }
      httplib::Result anonymous = Get(row.path, "");
      REQUIRE(anonymous);
      CHECK(anonymous->status == 401);
      CHECK(anonymous->get_header_value("WWW-Authenticate") == "Bearer realm=\"ampledger\"");
      ProblemOf(anonymous);
      httplib::Result forged = Get(row.path, admin + "x");
      REQUIRE(forged);
      CHECK(forged->status == 401);
      CHECK(forged->get_header_value("WWW-Authenticate") ==
            "Bearer realm=\"ampledger\", error=\"invalid_token\"");
    }
    // Health and readiness need no token: a supervisor asks them.
    for (const char* open : {"/v1/health", "/v1/ready"}) {
      httplib::Result answer = Get(open, "");
      REQUIRE(answer);
      CHECK(answer->status == 200);
    }
    // A unit token's 404 on a site-wide route reads like a path that does not exist.
    CHECK(ProblemOf(Get("/v1/site", unit_a))["detail"] == "no resource at /v1/site");
    CHECK(ProblemOf(Get("/v1/nowhere", unit_a))["detail"] == "no resource at /v1/nowhere");
    CHECK(ProblemOf(Get("/v1/circuits/b-heat/series" + q, unit_a))["detail"] ==
          "no circuit \"b-heat\"");
  }

  TEST_CASE_FIXTURE(ApiFixture, "lists and live values are filtered by scope") {
    using Strings = std::vector<std::string>;
    CHECK(Ids(GetJson("/v1/circuits", admin)["circuits"]) ==
          Strings{"a-heat", "a-kitchen", "b-heat", "hall"});
    CHECK(Ids(GetJson("/v1/circuits", viewer)["circuits"]).size() == 4);
    CHECK(Ids(GetJson("/v1/circuits", unit_a)["circuits"]) == Strings{"a-heat", "a-kitchen"});
    CHECK(Ids(GetJson("/v1/circuits", unit_b)["circuits"]) == Strings{"b-heat"});
    CHECK(GetJson("/v1/circuits", admin)["circuits"][3]["unit"].is_null());
    CHECK(Ids(GetJson("/v1/units", admin)["units"]) == Strings{"a", "b"});
    CHECK(Ids(GetJson("/v1/units", unit_b)["units"]) == Strings{"b"});

    json live = GetJson("/v1/live", unit_a);
    CHECK(Ids(live["circuits"]) == Strings{"a-heat", "a-kitchen"});
    CHECK(live["circuits"][0]["watts"] == doctest::Approx(100));
    CHECK(live["circuits"][1]["watts"] == doctest::Approx(400));
    CHECK(live["units"]["watts"] == "W");
    CHECK(Ids(GetJson("/v1/live", unit_b)["circuits"]) == Strings{"b-heat"});
    CHECK(Ids(GetJson("/v1/live", viewer)["circuits"]).size() == 4);
  }

  TEST_CASE_FIXTURE(ApiFixture, "health lists its checks, with details only for whole-site "
                                "tokens; ready gates on them") {
    json open = GetJson("/v1/health", "");
    CHECK(open["status"] == "pass");
    REQUIRE(open["checks"].size() == 3);
    for (const json& check : open["checks"]) {
      CHECK(check["status"] == "pass");
      CHECK_FALSE(check.contains("detail"));  // anonymous callers learn no paths or sizes
    }
    CHECK(open["checks"][2]["name"] == "disk_free");
    CHECK(ParseRfc3339(open["time"].get<std::string>()).has_value());
    CHECK_FALSE(GetJson("/v1/health", unit_a)["checks"][2].contains("detail"));
    const std::string detail = GetJson("/v1/health", viewer)["checks"][2]["detail"];
    CHECK(detail.find(" bytes free in " + dir.path().string() + ", at least 67108864 needed") !=
          std::string::npos);
    CHECK(GetJson("/v1/ready", "") == json{{"ready", true}});

    // A threshold no disk meets (read by the routes at each request).
    config.storage.min_free_bytes = std::int64_t{1} << 50;
    json failing = GetJson("/v1/health", "");
    CHECK(failing["status"] == "fail");
    CHECK(failing["checks"][2] == json{{"name", "disk_free"}, {"status", "fail"}});
    httplib::Result ready = Get("/v1/ready", "");
    REQUIRE(ready);
    CHECK(ready->status == 503);
    CHECK(ready->get_header_value("Retry-After") == "30");
    CHECK(ProblemOf(ready)["detail"] ==
          "not ready: failing checks: disk_free (see /v1/health)");
  }

  TEST_CASE_FIXTURE(ApiFixture, "the OpenAPI document is served and lists every route the "
                                "server has, and no other") {
    const json document = GetJson("/v1/openapi.json", "");
    CHECK(document == json::parse(testing::ReadFile(testing::SourceDir() / "api/openapi.json")));
    CHECK(document["openapi"] == "3.1.0");
    // "GET /v1/circuits/{}/series" from the server's pattern and from the document's path.
    const std::set<std::string> served = testing::ServedRoutes(server);
    std::set<std::string> documented = testing::DocumentedRoutes(document);
    CHECK(served.count("GET /v1/circuits/{}/series") == 1);  // patterns became templates
    // This server has no alert recorder, so no alert routes; the alert routes' test compares
    // the rest (tests/api/alert_routes_test.cpp).
    std::erase_if(documented, [](const std::string& route) {
      return route.find("/v1/alerts") != std::string::npos ||
             route.find("/v1/events") != std::string::npos;
    });
    CHECK(served == documented);
    // Each documented open route answers without a token; each guarded one asks for it.
    for (const auto& [path, item] : document["paths"].items()) {
      if (path.find('{') != std::string::npos || path == "/v1/alerts" || path == "/v1/events") {
        continue;  // templated, or not on this server (see above)
      }
      CAPTURE(path);
      const bool open = item["get"].contains("security") && item["get"]["security"].size() > 0 &&
                        item["get"]["security"][0].empty();
      CHECK((Get(path, "")->status == 401) == !open);
    }
  }

  // Runs `command` in a shell with its output to a file in `dir`; the exit status and output.
  static std::pair<int, std::string> Shell(const testing::TempDir& dir,
                                           const std::string& command) {
    const std::string output = dir.File("shell.txt");
    const int status = std::system((command + " > '" + output + "' 2>&1").c_str());
    return {status, testing::ReadFile(output)};
  }

  TEST_CASE_FIXTURE(ApiFixture, "/metrics passes promtool's checks in both formats") {
    // promtool is the Prometheus project's checker (Debian package prometheus).
    httplib::Result plain = Get("/metrics", viewer);
    REQUIRE(plain);
    REQUIRE(plain->status == 200);
    CHECK(plain->get_header_value("Content-Type") == "text/plain; version=0.0.4; charset=utf-8");
    CHECK(plain->body.find("ampledger_circuit_power_watts{circuit=\"hall\"") !=
          std::string::npos);
    // `check metrics` parses the Prometheus text format and lints names, types and help; it
    // prints nothing when all is well.
    testing::WriteFile(dir.File("metrics.txt"), plain->body);
    auto [status, report] =
        Shell(dir, "promtool check metrics < '" + dir.File("metrics.txt") + "'");
    CHECK_MESSAGE(status == 0, report);
    CHECK_MESSAGE(report.empty(), report);

    // OpenMetrics, as a scraper asks for it. promtool reads it with Prometheus's OpenMetrics
    // parser when it imports samples into blocks; that import needs a timestamp on each
    // sample, so one is added to every sample line (OpenMetrics allows it).
    httplib::Result open =
        Get("/metrics", viewer, "application/openmetrics-text; version=1.0.0");
    REQUIRE(open);
    REQUIRE(open->status == 200);
    CHECK(open->get_header_value("Content-Type") ==
          "application/openmetrics-text; version=1.0.0; charset=utf-8");
    std::string stamped;
    int samples = 0;
    for (size_t start = 0; start < open->body.size();) {
      const size_t end = open->body.find('\n', start);
      const std::string line = open->body.substr(start, end - start);
      stamped += line + (line.rfind("#", 0) == 0 ? "" : " 1767225600") + "\n";
      samples += line.rfind("#", 0) == 0 ? 0 : 1;
      start = end + 1;
    }
    testing::WriteFile(dir.File("openmetrics.txt"), stamped);
    auto [imported, log] = Shell(dir, "promtool tsdb create-blocks-from openmetrics '" +
                                          dir.File("openmetrics.txt") + "' '" +
                                          dir.File("blocks") + "'");
    CHECK_MESSAGE(imported == 0, log);
    // Its summary table ends with the block's sample count.
    CHECK_MESSAGE(log.find("  " + std::to_string(samples) + "  ") != std::string::npos, log);
  }

  TEST_CASE_FIXTURE(ApiFixture, "a revoked token stops working at its next request") {
    Result<IssuedToken> issued = IssueToken(*tokens_db, *ParseScope("viewer"), "spare", 0);
    REQUIRE(issued.ok());
    CHECK(Get("/v1/site", issued->token)->status == 200);
    REQUIRE(RevokeToken(*tokens_db, issued->id, 1).ok());
    CHECK(Get("/v1/site", issued->token)->status == 401);
    CHECK(Get("/v1/site", admin)->status == 200);
  }

  TEST_CASE_FIXTURE(ApiFixture, "bad inputs give the right status and a problem; the server "
                                "stays healthy") {
    struct Bad {
      std::string path;
      int status;
      std::string detail_has;
    };
    const std::string a = "/v1/circuits/a-heat/series?";
    const std::vector<Bad> table = {
        {a + "to=2026-03-09T00:00:00-05:00", 400, "\"from\": required"},
        {a + "from=2026-03-08T00:00&to=2026-03-09T00:00:00-05:00", 400, "\"from\""},
        {a + "from=2026-3-08&to=2026-03-09T00:00:00-05:00", 400, "\"from\""},
        {a + "from=2026-02-29&to=2026-03-09", 400, "\"from\": \"2026-02-29\" is neither"},
        {a + "from=2026-03-08T00:00:00&to=2026-03-09T00:00:00-05:00", 400, "\"from\""},
        {a + "from=2026-13-08T00:00:00Z&to=2026-03-09T00:00:00-05:00", 400, "\"from\""},
        {a + "from=2026-02-30T00:00:00Z&to=2026-03-09T00:00:00-05:00", 400, "\"from\""},
        {a + "from=2026-03-08T24:00:00Z&to=2026-03-09T00:00:00-05:00", 400, "\"from\""},
        {a + "from=2026-03-08T00:00:00-06:00&to=tomorrow", 400, "\"to\""},
        {a + "from=2026-03-09T00:00:00-05:00&to=2026-03-08T00:00:00-06:00", 400,
         "\"to\": must be later"},
        {a + "from=2026-03-09T00:00:00-05:00&to=2026-03-09T00:00:00-05:00", 400,
         "\"to\": must be later"},
        {a + "from=2026-03-08T00:07:00-06:00&to=2026-03-09T00:00:00-05:00&step=hour", 400,
         "\"from\": is not the start of a local hour"},
        {a + kSpringDay + "&step=week", 400, "\"step\""},
        {a + kSpringDay + "&format=xml", 400, "\"format\""},
        {a + kSpringDay + "&limit=5", 400, "\"limit\""},
        {a + kSpringDay + "&step=hour&step=day", 400, "given more than once"},
        // Huge ranges: over the points limit, or raw beyond its window.
        {a + "from=2020-01-01T00:00:00-06:00&to=2026-01-01T00:00:00-06:00&step=15m", 400,
         "use a coarser step"},
        {a + "from=2000-01-01T00:00:00-06:00&to=2026-01-01T00:00:00-06:00&step=hour", 400,
         "use a coarser step"},
        {a + "from=2026-03-07T00:00:00-06:00&to=2026-03-10T00:00:00-05:00&step=raw", 400,
         "raw readings are served for at most"},
        {"/v1/units/a/series?" + kSpringDay + "&step=raw", 400, "\"step\""},
        // Unknown ids, and ids made of SQL metacharacters, are simply not there.
        {"/v1/circuits/nope/series?" + kSpringDay, 404, "no circuit"},
        {"/v1/units/zz/series?" + kSpringDay, 404, "no unit"},
        {"/v1/circuits/a-heat%27%20OR%20%271%27=%271/series?" + kSpringDay, 404, "no circuit"},
        {"/v1/circuits/x%27%3B%20DROP%20TABLE%20rollup%3B--/series?" + kSpringDay, 404,
         "no circuit"},
        {"/v1/units/%22%20OR%201=1%20--/series?" + kSpringDay, 404, "no unit"},
        {a + "from=2026-03-08T00:00:00-06:00%27%3B--&to=2026-03-09T00:00:00-05:00", 400,
         "\"from\""},
        {"/v1/circuits/a-heat", 404, "no resource"},
        // Energy totals: bounds on quarter hours, in order, at most 400 days; known values.
        {"/v1/energy?from=2026-03-08T00:05:00-06:00&to=2026-03-09", 400,
         "\"from\": energy is kept per quarter hour"},
        {"/v1/energy?from=2026-03-09&to=2026-03-08", 400, "\"to\": must be later"},
        {"/v1/energy?from=2025-01-01&to=2026-03-08", 400, "longer than 400 days"},
        {"/v1/energy?" + kSpringDay + "&by=node", 400,
         "\"by\": \"node\" is not circuit, unit or rate_period"},
        {"/v1/energy?" + kSpringDay + "&step=day", 400, "\"step\": not known here"},
        {"/v1/energy?to=2026-03-09", 400, "\"from\": required"},
        {"/v1/energy?" + kSpringDay + "&from=2026-03-01", 400, "given more than once"},
        {"/v1/energy?from=2025-01-01&to=2026-03-08&by=rate_period", 400, "longer than 400 days"},
        // Tariff rates: a moment, or a bounded range on quarter hours.
        {"/v1/tariff/now?at=noon", 400, "\"at\": \"noon\" is neither"},
        {"/v1/tariff/now?at=2026-03-08T12:00:00-06:00&at=2026-03-09", 400, "given more than once"},
        {"/v1/tariff/now?when=2026-03-08", 400, "\"when\": not known here (at)"},
        {"/v1/tariff/now?at=2026-03-08T12:00:00%27%3B--", 400, "\"at\""},
        {"/v1/tariff/periods?from=2026-03-09&to=2026-03-08", 400, "\"to\": must be later"},
        {"/v1/tariff/periods?from=2026-03-01&to=2026-04-02", 400, "longer than 31 days"},
        {"/v1/tariff/periods?from=2026-03-08T00:10:00-06:00&to=2026-03-09", 400,
         "\"from\": rates change only on quarter hours"},
        {"/v1/tariff/periods?to=2026-03-09", 400, "\"from\": required"},
        // Billing cycles: named YYYY-MM; units by id.
        {"/v1/cycles/current?unit=zz", 404, "no unit \"zz\""},
        {"/v1/cycles/current?unit=a%27%20OR%20%271%27=%271", 404, "no unit"},
        {"/v1/cycles/current?at=yesterday", 400, "\"at\""},
        {"/v1/cycles/current?unit=a&unit=b", 400, "given more than once"},
        {"/v1/units/a/statements/2026-13", 400, "\"cycle\": \"2026-13\" is not a billing cycle"},
        {"/v1/units/a/statements/2026-3", 400, "\"cycle\": \"2026-3\" is not a billing cycle"},
        {"/v1/units/a/statements/1969-12", 400, "1970-01 or later"},
        {"/v1/units/a/statements/2026-03%27%3B%20DROP%20TABLE%20rollup%3B--", 400,
         "is not a billing cycle"},
        {"/v1/units/a/statements/9999-01", 404, "no billing cycle 9999-01 yet"},
        {"/v1/units/a/statements/2026-03?format=pdf", 400, "\"format\": \"pdf\" is not json, html, csv"},
        {"/v1/units/zz/statements/2026-03", 404, "no unit \"zz\""},
        {"/v1/units/%22%20OR%201=1%20--/statements/2026-03", 404, "no unit"},
        {"/v1/bills/03-2026", 400, "is not a billing cycle"},
        {"/v1/bills/2026-03?format=csv", 400, "\"format\": \"csv\" is not json, text"},
        {"/v1/bills/2026-03?unit=a", 400, "\"unit\": not known here"},
        // Main-meter reads: a bounded range.
        {"/v1/main-meter/reads?from=2026-03-09&to=2026-03-08", 400, "\"to\": must be later"},
        {"/v1/main-meter/reads?from=2000-01-01&to=2026-03-08", 400, "longer than 3660 days"},
        {"/v1/main-meter/reads?from=2026-03-01", 400, "\"to\": required"},
    };
    for (const Bad& bad : table) {
      CAPTURE(bad.path);
      httplib::Result result = Get(bad.path, admin);
      REQUIRE(result);
      CHECK(result->status == bad.status);
      const std::string detail = ProblemOf(result)["detail"];
      CHECK_MESSAGE(detail.find(bad.detail_has) != std::string::npos, detail);
    }
    // An oversize body is refused before it is read.
    httplib::Headers headers = {{"Authorization", "Bearer " + admin}};
    httplib::Result oversize =
        client->Post("/v1/circuits", headers, std::string(kMaxRequestBodyBytes + 1, 'x'),
                     "application/json");
    REQUIRE(oversize);
    CHECK(oversize->status == 413);
    ProblemOf(oversize);
    httplib::Result wrong_method = client->Post("/v1/live", headers, "{}", "application/json");
    REQUIRE(wrong_method);
    CHECK(wrong_method->status == 405);
    ProblemOf(wrong_method);

    client = std::make_unique<httplib::Client>("127.0.0.1", server.port());
    CHECK(Get("/v1/health", "")->status == 200);
    json series = GetJson("/v1/circuits/a-heat/series?" + kSpringDay + "&step=day", admin);
    CHECK(series["points"][0]["energy_wh"].get<double>() > 0);  // rollup table still there
  }

  TEST_CASE_FIXTURE(ApiFixture, "series energy equals the storage rollups; DST days have 23 "
                                "and 25 local hours") {
    const UnixMs spring_from = At("2026-03-08T00:00:00-06:00");
    const UnixMs spring_to = At("2026-03-09T00:00:00-05:00");
    json spring = GetJson("/v1/circuits/a-heat/series?" + kSpringDay + "&step=hour", viewer);
    CHECK(spring["time_zone"] == "America/Chicago");
    CHECK(spring["units"]["energy_wh"] == "Wh");
    CHECK(spring["units"]["mean_w"] == "W");
    CHECK(spring["units"]["total_energy_kwh"] == "kWh");
    CHECK(spring["from"] == "2026-03-08T00:00:00-06:00");
    CHECK(spring["to"] == "2026-03-09T00:00:00-05:00");
    REQUIRE(spring["points"].size() == 23);
    CHECK(spring["points"][1]["start"] == "2026-03-08T01:00:00-06:00");
    CHECK(spring["points"][2]["start"] == "2026-03-08T03:00:00-05:00");
    double sum_wh = 0;
    for (const json& point : spring["points"]) {
      sum_wh += point["energy_wh"].get<double>();
      CHECK(point["coverage"] == doctest::Approx(1));
      CHECK(point["quality"] == "measured");
    }
    const double rollup_wh = RollupWh({0}, spring_from, spring_to);
    CHECK(sum_wh == doctest::Approx(rollup_wh).epsilon(1e-12));
    CHECK(sum_wh == doctest::Approx(TruthWh(0, spring_from, spring_to)).epsilon(1e-9));
    CHECK(spring["total_energy_kwh"].get<double>() * 1000 ==
          doctest::Approx(rollup_wh).epsilon(1e-12));
    // The same day as one point, as 92 quarter hours, and per hour mean power.
    json day = GetJson("/v1/circuits/a-heat/series?" + kSpringDay + "&step=day", viewer);
    REQUIRE(day["points"].size() == 1);
    CHECK(day["points"][0]["energy_wh"] == doctest::Approx(rollup_wh).epsilon(1e-12));
    CHECK(day["points"][0]["mean_w"] == doctest::Approx(rollup_wh / 23).epsilon(1e-12));
    CHECK(GetJson("/v1/circuits/a-heat/series?" + kSpringDay + "&step=15m", viewer)["points"]
              .size() == 92);

    // Fall back: 25 hours; the unit's series is the sum of its own two circuits.
    const UnixMs fall_from = At("2026-11-01T00:00:00-05:00");
    const UnixMs fall_to = At("2026-11-02T00:00:00-06:00");
    json fall = GetJson("/v1/units/a/series?" + kFallDay + "&step=hour", unit_a);
    CHECK(fall["unit"] == "a");
    CHECK(fall["circuits"] == json::array({"a-heat", "a-kitchen"}));
    REQUIRE(fall["points"].size() == 25);
    CHECK(fall["points"][1]["start"] == "2026-11-01T01:00:00-05:00");
    CHECK(fall["points"][2]["start"] == "2026-11-01T01:00:00-06:00");
    double unit_wh = 0;
    for (const json& point : fall["points"]) unit_wh += point["energy_wh"].get<double>();
    CHECK(unit_wh == doctest::Approx(RollupWh({0, 1}, fall_from, fall_to)).epsilon(1e-12));
    CHECK(unit_wh == doctest::Approx(TruthWh(0, fall_from, fall_to) +
                                     TruthWh(3, fall_from, fall_to))
                         .epsilon(1e-9));

    // A month with no data for part of it: coverage says how much was measured.
    json month = GetJson("/v1/circuits/b-heat/series?from=2026-03-01T00:00:00-06:00&"
                         "to=2026-04-01T00:00:00-05:00&step=month",
                         admin);
    REQUIRE(month["points"].size() == 1);
    // 3 local days (71 hours) of a 743-hour month.
    CHECK(month["points"][0]["coverage"] == doctest::Approx(71.0 / 743.0).epsilon(1e-9));
  }

  TEST_CASE_FIXTURE(ApiFixture, "energy by circuit and by unit equals the storage rollups; "
                                "local dates are local midnights") {
    // Local dates: the spring-forward day in America/Chicago is 23 hours (IANA tz).
    const UnixMs from = At("2026-03-08T00:00:00-06:00");
    const UnixMs to = At("2026-03-09T00:00:00-05:00");
    json by_circuit = GetJson("/v1/energy?from=2026-03-08&to=2026-03-09", viewer);
    CHECK(by_circuit["by"] == "circuit");
    CHECK(by_circuit["from"] == "2026-03-08T00:00:00-06:00");
    CHECK(by_circuit["to"] == "2026-03-09T00:00:00-05:00");
    CHECK(by_circuit["time_zone"] == "America/Chicago");
    CHECK(by_circuit["units"]["consumption_kwh"] == "kWh");
    CHECK(by_circuit["units"]["apparent_energy_kvah"] == "kVAh");
    REQUIRE(by_circuit["rows"].size() == 4);
    double total_wh = 0;
    for (int circuit = 0; circuit < 4; ++circuit) {
      const json& row = by_circuit["rows"][circuit];
      CAPTURE(row.dump());
      CHECK(row["circuit"] == config.circuits[circuit].id);
      const double rollup_wh = RollupWh({circuit}, from, to);
      CHECK(row["consumption_kwh"].get<double>() * 1000 ==
            doctest::Approx(rollup_wh).epsilon(1e-12));
      CHECK(row["export_kwh"] == 0.0);
      CHECK(row["coverage"] == doctest::Approx(1));
      CHECK(row["quality"] == "measured");
      total_wh += rollup_wh;
    }
    // Circuit 0 is channel 0 (a-heat): the readings themselves.
    CHECK(by_circuit["rows"][0]["consumption_kwh"].get<double>() * 1000 ==
          doctest::Approx(TruthWh(0, from, to)).epsilon(1e-9));
    CHECK(by_circuit["rows"][3]["unit"].is_null());
    CHECK(by_circuit["total"]["consumption_kwh"].get<double>() * 1000 ==
          doctest::Approx(total_wh).epsilon(1e-12));
    // The same range in RFC 3339 is the same answer; the series' total agrees.
    CHECK(GetJson("/v1/energy?" + kSpringDay, viewer) == by_circuit);
    CHECK(GetJson("/v1/circuits/a-heat/series?from=2026-03-08&to=2026-03-09&step=day",
                  viewer)["total_energy_kwh"] == by_circuit["rows"][0]["consumption_kwh"]);

    json by_unit = GetJson("/v1/energy?" + kFallDay + "&by=unit", admin);
    const UnixMs fall_from = At("2026-11-01T00:00:00-05:00");
    const UnixMs fall_to = At("2026-11-02T00:00:00-06:00");
    REQUIRE(by_unit["rows"].size() == 3);
    CHECK(by_unit["rows"][0]["unit"] == "a");
    CHECK(by_unit["rows"][0]["circuits"] == json::array({"a-heat", "a-kitchen"}));
    CHECK(by_unit["rows"][0]["consumption_kwh"].get<double>() * 1000 ==
          doctest::Approx(RollupWh({0, 1}, fall_from, fall_to)).epsilon(1e-12));
    CHECK(by_unit["rows"][1]["unit"] == "b");
    CHECK(by_unit["rows"][2]["unit"].is_null());  // the hall lights belong to no unit
    CHECK(by_unit["rows"][2]["circuits"] == json::array({"hall"}));
    CHECK(by_unit["total"]["consumption_kwh"].get<double>() * 1000 ==
          doctest::Approx(RollupWh({0, 1, 2, 3}, fall_from, fall_to)).epsilon(1e-12));

    // A unit token sees its own unit and circuits only, and no row of circuits of no unit.
    json own = GetJson("/v1/energy?" + kFallDay + "&by=unit", unit_b);
    REQUIRE(own["rows"].size() == 1);
    CHECK(own["rows"][0]["unit"] == "b");
    json circuits_of_a = GetJson("/v1/energy?" + kFallDay, unit_a);
    REQUIRE(circuits_of_a["rows"].size() == 2);
    CHECK(circuits_of_a["rows"][1]["circuit"] == "a-kitchen");

    // A range with no data has zero energy, coverage 0 and no quality.
    json empty = GetJson("/v1/energy?from=2026-06-01&to=2026-06-02&by=unit", viewer);
    CHECK(empty["rows"][0]["consumption_kwh"] == 0.0);
    CHECK(empty["rows"][0]["coverage"] == 0.0);
    CHECK(empty["rows"][0]["quality"].is_null());
  }

  // The fixture's tariff by hand (tests/api/api_fixture.h): on a weekday, overnight 0.06 from
  // 00:00 to 06:00, peak 0.25 from 16:00 to 21:00, off-peak 0.10 otherwise; energy charges
  // leave out the adder, the fixed charge and the tax.
  static double HandPrice(int local_hour) {
    return local_hour < 6 ? 0.06 : (local_hour >= 16 && local_hour < 21 ? 0.25 : 0.10);
  }

  TEST_CASE_FIXTURE(ApiFixture, "energy and cost answers agree with the storage rollups and the "
                                "tariff engine for the same range") {
    // Monday 9 March 2026, a CDT day (UTC-5) after the spring change.
    const UnixMs from = At("2026-03-09T00:00:00-05:00");
    const UnixMs to = At("2026-03-10T00:00:00-05:00");
    const LocalTime local = LocalTime::ForZone("America/Chicago").value();
    auto reader = std::move(Database::OpenReader(config.storage.path).value());
    json by_circuit = GetJson("/v1/energy?from=2026-03-09&to=2026-03-10", viewer);
    CHECK(by_circuit["currency"] == "USD");
    CHECK(by_circuit["units"]["cost"] == "USD");
    double total_cost = 0;
    std::map<std::string, std::pair<double, double>> hand_periods;  // period -> kWh, cost
    for (int circuit = 0; circuit < 4; ++circuit) {
      const json& row = by_circuit["rows"][circuit];
      CAPTURE(row.dump());
      // The engine on the same stored buckets.
      Result<std::vector<CircuitBucket>> buckets =
          ReadCircuitBuckets(*reader, series, circuit, from, to);
      REQUIRE(buckets.ok());
      std::vector<BucketEnergy> energy;
      for (const CircuitBucket& bucket : *buckets) {
        energy.push_back({bucket.start_ms, bucket.real_wh / 1000});
      }
      Result<std::vector<ScheduledCharges>> charges = tariffs.PriceEnergy(local, energy);
      REQUIRE(charges.ok());
      REQUIRE(charges->size() == 1);
      double engine = 0;
      for (const EnergyCharge& line : charges->front().lines) engine += line.amount;
      CHECK(row["cost"] == doctest::Approx(engine).epsilon(1e-12));
      total_cost += engine;
      // And by hand from the readings: each 5-minute reading priced by the local hour it
      // started in (UTC-5 all day).
      const int channel = std::array<int, 4>{0, 3, 1, 2}[circuit];  // the circuits' CTs
      double hand = 0;
      for (UnixMs end = from + kReadingMs; end <= to; end += kReadingMs) {
        const int hour = static_cast<int>(((end - kReadingMs - from) / 3600000) % 24);
        const double kwh = Watts(channel, end) * kReadingMs / 3.6e9;
        const char* period = hour < 6 ? "overnight" : (hour >= 16 && hour < 21 ? "peak" : "off-peak");
        hand += kwh * HandPrice(hour);
        hand_periods[period].first += kwh;
        hand_periods[period].second += kwh * HandPrice(hour);
      }
      CHECK(row["cost"] == doctest::Approx(hand).epsilon(1e-9));
    }
    CHECK(by_circuit["total"]["cost"] == doctest::Approx(total_cost).epsilon(1e-12));

    // By rate period: the same energy and cost, one row per period.
    json by_period = GetJson("/v1/energy?from=2026-03-09&to=2026-03-10&by=rate_period", admin);
    CHECK(by_period["by"] == "rate_period");
    REQUIRE(by_period["rows"].size() == 3);
    double period_kwh = 0;
    for (const json& row : by_period["rows"]) {
      CAPTURE(row.dump());
      const std::string period = row["period"];
      REQUIRE(hand_periods.count(period) == 1);
      CHECK(row["kwh"] == doctest::Approx(hand_periods[period].first).epsilon(1e-9));
      CHECK(row["cost"] == doctest::Approx(hand_periods[period].second).epsilon(1e-9));
      period_kwh += row["kwh"].get<double>();
    }
    CHECK(period_kwh == doctest::Approx(by_circuit["total"]["consumption_kwh"].get<double>())
                            .epsilon(1e-12));
    CHECK(by_period["total"]["cost"] == doctest::Approx(total_cost).epsilon(1e-12));
    // A unit's rows cost what its circuits cost; a unit token's periods cover its circuits.
    json by_unit = GetJson("/v1/energy?from=2026-03-09&to=2026-03-10&by=unit", viewer);
    CHECK(by_unit["rows"][0]["cost"] ==
          doctest::Approx(by_circuit["rows"][0]["cost"].get<double>() +
                          by_circuit["rows"][1]["cost"].get<double>())
              .epsilon(1e-12));
    json own_periods = GetJson("/v1/energy?from=2026-03-09&to=2026-03-10&by=rate_period", unit_b);
    CHECK(own_periods["total"]["cost"] ==
          doctest::Approx(by_circuit["rows"][2]["cost"].get<double>()).epsilon(1e-12));
    httplib::Result csv =
        Get("/v1/energy?from=2026-03-09&to=2026-03-10&by=rate_period&format=csv", viewer);
    REQUIRE(csv);
    CHECK(csv->body.rfind("from,to,period,kwh,cost\r\n", 0) == 0);
    CHECK(csv->body.find("\r\n2026-03-09T00:00:00-05:00,2026-03-10T00:00:00-05:00,peak,") !=
          std::string::npos);
  }

  TEST_CASE_FIXTURE(ApiFixture, "energy as CSV (RFC 4180)") {
    httplib::Result csv = Get("/v1/energy?" + kSpringDay + "&by=unit&format=csv", viewer);
    REQUIRE(csv);
    CHECK(csv->status == 200);
    CHECK(csv->get_header_value("Content-Type").rfind("text/csv", 0) == 0);
    CHECK(csv->get_header_value("Ampledger-Time-Zone") == "America/Chicago");
    const std::string& body = csv->body;
    // RFC 4180 section 2: a header line, CRLF after every record, quoted fields with commas.
    const std::string header = "from,to,unit,name,circuits,consumption_kwh,export_kwh,"
                               "apparent_energy_kvah,coverage,quality,cost\r\n";
    REQUIRE(body.rfind(header, 0) == 0);
    CHECK(body.find("\r\n2026-03-08T00:00:00-06:00,2026-03-09T00:00:00-05:00,a,a,"
                    "a-heat a-kitchen,") != std::string::npos);
    CHECK(body.find(",,\"shared circuits, and circuits of no unit\",hall,") != std::string::npos);
    int records = 0;
    for (size_t at = body.find("\r\n"); at != std::string::npos; at = body.find("\r\n", at + 2)) {
      ++records;
    }
    CHECK(records == 4);  // the header and three rows
    CHECK(body.back() == '\n');
    httplib::Result accepted = Get("/v1/energy?" + kSpringDay + "&by=unit", viewer, "text/csv");
    REQUIRE(accepted);
    CHECK(accepted->body == body);
  }

  TEST_CASE_FIXTURE(ApiFixture, "series as CSV (RFC 4180) and raw readings") {
    const std::string path = "/v1/circuits/a-heat/series?" + kSpringDay + "&step=hour";
    httplib::Result csv = Get(path + "&format=csv", viewer);
    REQUIRE(csv);
    CHECK(csv->status == 200);
    CHECK(csv->get_header_value("Content-Type").rfind("text/csv", 0) == 0);
    CHECK(csv->get_header_value("Ampledger-Time-Zone") == "America/Chicago");
    const std::string& body = csv->body;
    // RFC 4180 section 2: CRLF line breaks, an optional header line, the same field count.
    CHECK(body.rfind("start,end,energy_wh,apparent_energy_vah,mean_w,min_w,max_w,coverage,"
                     "quality\r\n",
                     0) == 0);
    int lines = 0;
    for (size_t at = body.find("\r\n"); at != std::string::npos; at = body.find("\r\n", at + 2)) {
      ++lines;
    }
    CHECK(lines == 24);
    CHECK(body.find("\n2026-03-08T03:00:00-05:00,2026-03-08T04:00:00-05:00,") !=
          std::string::npos);
    httplib::Result accepted = Get(path, viewer, "text/csv");
    REQUIRE(accepted);
    CHECK(accepted->body == body);

    json raw = GetJson("/v1/circuits/a-heat/series?from=2026-03-08T01:00:00-06:00&"
                       "to=2026-03-08T03:00:00-05:00&step=raw",
                       unit_a);
    REQUIRE(raw["points"].size() == 12);  // 5-minute readings ending in (from, to]
    CHECK(raw["points"][0]["channel"] == "panel/ct1");
    CHECK(raw["points"][0]["end"] == "2026-03-08T01:05:00-06:00");
    CHECK(raw["points"][11]["end"] == "2026-03-08T03:00:00-05:00");
    CHECK(raw["points"][0]["real_w"] ==
          doctest::Approx(Watts(0, At("2026-03-08T01:05:00-06:00"))));
    CHECK(raw["units"]["real_w"] == "W");
  }
}

}  // namespace
}  // namespace ampledger
