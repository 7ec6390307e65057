// tests/api/alert_routes_test.cpp
// The alert routes through a real HttpServer on 127.0.0.1 over a real SQLite file fed by the
// real writer and alert recorder: scopes, long-polls (woken by the event, once per waiter,
// capped with 503 + Retry-After), acknowledge, silence and bad inputs.
#include "api/alert_routes.h"

#include <doctest/doctest.h>
#include <httplib.h>

#include <chrono>
#include <future>
#include <nlohmann/json.hpp>
#include <thread>

#include "api/token.h"
#include "config/wall_clock.h"
#include "storage/series.h"
#include "openapi_routes.h"
#include "test_util.h"

namespace ampledger {
namespace {

using nlohmann::json;

constexpr UnixMs kT0 = 1'772'953'200'000;  // 2026-03-08T07:00:00Z

const char* kSite = R"toml(
[site]
name = "Larch Court flats"
time_zone = "America/Chicago"
nominal_volts = [120]

[[node]]
id = "panel"
auth = "plain"
[[node.channel]]
id = "ct1"
[[node.channel]]
id = "ct2"

[[circuit]]
id = "a-heat"
channels = ["panel/ct1"]
[[circuit]]
id = "b-heat"
channels = ["panel/ct2"]

[[unit]]
id = "a"
circuits = ["a-heat"]
[[unit]]
id = "b"
circuits = ["b-heat"]

[[alert]]
id = "hot"
kind = "power_above"
circuits = ["a-heat", "b-heat"]
level_watts = 1000
clear_watts = 500

[storage]
path = "alerts.db"
batch_millis = 5

[http]
listen = "127.0.0.1:0"
threads = 4
)toml";

Config LoadSite(const testing::TempDir& dir) {
  Result<Config> parsed = ParseConfig(kSite, dir.File("site.toml"));
  REQUIRE(parsed.ok());
  return *parsed;
}

struct AlertApi {
  AlertApi() : config(LoadSite(dir)), server(config.http) {
    db = std::move(Database::Open(config.storage).value());
    series = RegisterSeries(*db, config).value();
    recorder = std::move(AlertRecorder::Create(config, *db, {}).value());
    WriterOptions options;
    options.hook = recorder.get();
    writer = std::move(ReadingWriter::Start(config, db.get(), series, options).value());
    recorder->Start(writer.get());
    tokens_db = std::move(Database::Open(config.storage).value());
    ApiContext context{&config, &series, config.storage.path, writer.get(), nullptr, nullptr};
    context.alerts = recorder.get();
    AddApiRoutes(server, context);
    REQUIRE(server.Start().ok());
    admin = Issue("admin");
    viewer = Issue("viewer");
    unit_a = Issue("unit:a");
    unit_b = Issue("unit:b");
  }
  ~AlertApi() {
    recorder->Stop();
    server.Stop();
    writer->Stop();
  }

  std::string Issue(const char* scope) {
    Result<IssuedToken> issued = IssueToken(*tokens_db, *ParseScope(scope), "test", 0);
    REQUIRE(issued.ok());
    return issued->token;
  }

  void Store(int channel, UnixMs end_ms, double watts) {
    ChannelReading r;
    r.channel = channel;
    r.end_ms = end_ms;
    r.duration_ms = 10'000;
    r.real_watts = watts;
    r.apparent_va = watts;
    r.volts = 120;
    r.amps = watts / 120;
    std::promise<Status> done;
    writer->Submit(ReadingBatch{{r}, {}}, [&](const Status& s) { done.set_value(s); });
    REQUIRE(done.get_future().get().ok());
  }

  httplib::Result Get(const std::string& path, const std::string& token) {
    httplib::Client client("127.0.0.1", server.port());
    client.set_read_timeout(30);
    return client.Get(path.c_str(), {{"Authorization", "Bearer " + token}});
  }
  httplib::Result Post(const std::string& path, const std::string& token,
                       const std::string& body = "") {
    httplib::Client client("127.0.0.1", server.port());
    return client.Post(path.c_str(), {{"Authorization", "Bearer " + token}}, body,
                       "application/json");
  }
  json GetJson(const std::string& path, const std::string& token) {
    httplib::Result result = Get(path, token);
    REQUIRE(result);
    REQUIRE_MESSAGE(result->status == 200, (path + ": " + result->body));
    return json::parse(result->body);
  }

  testing::TempDir dir;
  Config config;
  std::unique_ptr<Database> db;
  SeriesMap series;
  std::unique_ptr<AlertRecorder> recorder;
  std::unique_ptr<ReadingWriter> writer;
  std::unique_ptr<Database> tokens_db;
  HttpServer server;
  std::string admin, viewer, unit_a, unit_b;
};

TEST_SUITE("api") {
  TEST_CASE("alert routes: the OpenAPI document lists every route of a server with alerts") {
    AlertApi api;
    const nlohmann::json document =
        nlohmann::json::parse(testing::ReadFile(testing::SourceDir() / "api/openapi.json"));
    const std::set<std::string> served = testing::ServedRoutes(api.server);
    CHECK(served.count("POST /v1/alerts/{}/{}/{}/acknowledge") == 1);
    CHECK(served == testing::DocumentedRoutes(document));
  }

  TEST_CASE("alert routes: a unit token sees only its own alerts and events") {
    AlertApi api;
    api.Store(1, kT0, 1500);  // b-heat
    json all = api.GetJson("/v1/alerts", api.admin);
    REQUIRE(all["alerts"].size() == 1);
    CHECK(all["alerts"][0]["rule"] == "hot");
    CHECK(all["alerts"][0]["subject"] == json{{"type", "circuit"}, {"id", "b-heat"}});
    CHECK(all["alerts"][0]["acknowledged"] == false);
    json condition = all["alerts"][0]["condition"];
    CHECK(condition["kind"] == "raised");
    CHECK(condition["rule_kind"] == "power_above");
    CHECK(condition["values"]["watts"] == 1500);
    // 07:00Z is 01:00 CST (America/Chicago, IANA tz data), before that day's DST change.
    CHECK(condition["at"] == "2026-03-08T01:00:00-06:00");
    CHECK(api.GetJson("/v1/alerts", api.unit_a)["alerts"].empty());
    CHECK(api.GetJson("/v1/alerts", api.unit_b)["alerts"].size() == 1);
    json hidden = api.GetJson("/v1/events?after=0", api.unit_a);
    CHECK(hidden["events"].empty());
    CHECK(hidden["next_after"] == 1);  // past the event it may not see
    json shown = api.GetJson("/v1/events?after=0", api.unit_b);
    REQUIRE(shown["events"].size() == 1);
    CHECK(shown["events"][0]["id"] == 1);
    CHECK(shown["next_after"] == 1);
  }

  TEST_CASE("alert routes: long-polls wake on the event, once each; beyond the cap 503") {
    AlertApi api;
    auto started = std::chrono::steady_clock::now();
    auto wait = [&] { return api.GetJson("/v1/events?after=0&wait=20", api.admin); };
    std::future<json> first = std::async(std::launch::async, wait);
    std::future<json> second = std::async(std::launch::async, wait);
    // Four workers: half may wait. Give both waiters time to arrive, then a third is refused.
    std::this_thread::sleep_for(std::chrono::milliseconds(500));
    httplib::Result third = api.Get("/v1/events?after=0&wait=20", api.admin);
    REQUIRE(third);
    CHECK(third->status == 503);
    CHECK(third->get_header_value("Retry-After") == "5");
    CHECK(third->get_header_value("Content-Type") == "application/problem+json");
    CHECK(json::parse(third->body)["detail"] ==
          "2 requests are already waiting for events; try again later");
    api.Store(0, kT0, 2000);
    for (std::future<json>* waiter : {&first, &second}) {
      json answer = waiter->get();
      REQUIRE(answer["events"].size() == 1);
      CHECK(answer["events"][0]["subject"]["id"] == "a-heat");
    }
    // Returned on the event, not at the end of the 20 s wait (no timing claim beyond that).
    CHECK(std::chrono::steady_clock::now() - started < std::chrono::seconds(20));
    // Without an event, a wait ends with no events and the same cursor.
    json none = api.GetJson("/v1/events?after=1&wait=1", api.admin);
    CHECK(none["events"].empty());
    CHECK(none["next_after"] == 1);
  }

  TEST_CASE("alert routes: acknowledge and silence, by scope") {
    AlertApi api;
    api.Store(0, kT0, 2000);
    const std::string ack = "/v1/alerts/hot/circuit/a-heat/acknowledge";
    httplib::Result by_viewer = api.Post(ack, api.viewer);
    REQUIRE(by_viewer);
    CHECK(by_viewer->status == 403);
    httplib::Result by_other_unit = api.Post(ack, api.unit_b);
    REQUIRE(by_other_unit);
    CHECK(by_other_unit->status == 404);
    CHECK(json::parse(by_other_unit->body)["detail"] == "no alert \"hot\" for circuit:a-heat");
    httplib::Result calm = api.Post("/v1/alerts/hot/circuit/b-heat/acknowledge", api.admin);
    REQUIRE(calm);
    CHECK(calm->status == 404);
    httplib::Result done = api.Post(ack, api.unit_a);
    REQUIRE(done);
    CHECK(done->status == 200);
    json alerts = api.GetJson("/v1/alerts", api.admin);
    CHECK(alerts["alerts"][0]["acknowledged"] == true);
    CHECK(alerts["alerts"][0]["acknowledged_by"] == "unit:a token");

    const std::string silence = "/v1/alerts/hot/circuit/a-heat/silence";
    for (const char* bad : {"", "[]", "{\"seconds\": -1}", "{\"seconds\": \"60\"}",
                            "{\"seconds\": 2592001}", "{\"seconds\": 60, \"x\": 1}"}) {
      httplib::Result refused = api.Post(silence, api.admin, bad);
      REQUIRE(refused);
      CHECK_MESSAGE(refused->status == 400, bad);
    }
    httplib::Result quiet = api.Post(silence, api.admin, "{\"seconds\": 3600}");
    REQUIRE(quiet);
    CHECK(quiet->status == 200);
    json events = api.GetJson("/v1/events?after=0", api.admin);
    REQUIRE(events["events"].size() == 3);
    CHECK(events["events"][1]["kind"] == "acknowledged");
    CHECK(events["events"][2]["kind"] == "silenced");
    CHECK(events["events"][2]["silenced"] == true);
    CHECK(api.GetJson("/v1/alerts", api.admin)["alerts"][0]["silenced_until_ms"].is_number());
  }

  TEST_CASE("alert routes: bad parameters are problems naming the parameter") {
    AlertApi api;
    struct Case {
      const char* path;
      const char* detail;
    } cases[] = {
        {"/v1/events?wait=61",
         "query parameter \"wait\": \"61\" is not a whole number from 0 to 60"},
        {"/v1/events?after=-1",
         "query parameter \"after\": \"-1\" is not a whole number from 0 to "
         "9223372036854775806"},
        {"/v1/events?limit=0",
         "query parameter \"limit\": \"0\" is not a whole number from 1 to 1000"},
        {"/v1/events?after=1&after=2", "query parameter \"after\": given more than once"},
        {"/v1/events?cursor=1",
         "query parameter \"cursor\": not known here (after, wait, limit)"},
        {"/v1/alerts?x=1", "query parameter \"x\": not known here (none)"},
    };
    for (const Case& c : cases) {
      httplib::Result result = api.Get(c.path, api.admin);
      REQUIRE(result);
      CHECK_MESSAGE(result->status == 400, c.path);
      CHECK(json::parse(result->body)["detail"] == c.detail);
    }
    httplib::Result anonymous = httplib::Client("127.0.0.1", api.server.port()).Get("/v1/events");
    REQUIRE(anonymous);
    CHECK(anonymous->status == 401);
  }
}

}  // namespace
}  // namespace ampledger
