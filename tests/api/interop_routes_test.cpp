// tests/api/interop_routes_test.cpp
// The ESPI usage export and the reconciliation routes through a real HttpServer on 127.0.0.1
// over a real SQLite file: who may see what, the feed read back with the ESPI reader, and the
// published Green Button sample imported as main-meter intervals and reconciled.
#include "api/interop_routes.h"

#include <doctest/doctest.h>
#include <httplib.h>

#include <nlohmann/json.hpp>

#include "daemon/espi/espi_reader.h"
#include "daemon/espi/espi_usage.h"
#include "storage/main_meter_intervals.h"
#include "storage/token_store.h"
#include "test_util.h"

namespace ampledger {
namespace {

using nlohmann::json;

// Invented: two flats in the US Eastern zone; flat 1 has a heat pump and roof panels, flat 2
// an oven, and the hall lights belong to no unit.
const char* kSite = R"toml(
[site]
name = "Quarry Hill pair"
time_zone = "America/New_York"
nominal_volts = [120]
billing_cycle_day = 1

[[node]]
id = "panel"
key = "00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff"
[[node.channel]]
id = "ct1"
[[node.channel]]
id = "ct2"
[[node.channel]]
id = "ct3"
[[node.channel]]
id = "ct4"

[[circuit]]
id = "heat-pump"
channels = ["panel/ct1"]
[[circuit]]
id = "oven"
channels = ["panel/ct2"]
[[circuit]]
id = "roof"
channels = ["panel/ct3"]
direction = "export"
[[circuit]]
id = "hall"
channels = ["panel/ct4"]

[[unit]]
id = "flat1"
circuits = ["heat-pump", "roof"]
[[unit]]
id = "flat2"
circuits = ["oven"]

[storage]
path = "site.db"

[http]
listen = "127.0.0.1:0"
threads = 2
)toml";

constexpr UnixMs kDayStart = 1331442000000;  // 2012-03-11T00:00:00-05:00
constexpr int kDayBuckets = 92;              // 23 hours: the spring-forward day (IANA tz)
const double kBucketWh[] = {100, 50, 20, 10};  // per circuit, in config order

const std::string kDay = "from=2012-03-11&to=2012-03-12";

struct InteropFixture {
  InteropFixture() : server(Load().http) {
    config = Load();
    db = std::move(Database::Open(config.storage).value());
    series = RegisterSeries(*db, config).value();
    REQUIRE(db->Exec("BEGIN", "fill").ok());
    Result<Statement> insert = db->Prepare(
        "INSERT INTO rollup (circuit, bucket, real_wh, apparent_vah, min_w, max_w, coverage, "
        "quality) VALUES (?1, ?2, ?3, ?3, ?4, ?4, 1, 0)");
    REQUIRE(insert.ok());
    for (int k = 0; k < kDayBuckets; ++k) {
      for (int c = 0; c < 4; ++c) {
        insert->Bind(1, series.circuit_ids[c]);
        insert->Bind(2, static_cast<std::int64_t>(kDayStart + k * kMsPerBucket));
        insert->Bind(3, kBucketWh[c]);
        insert->Bind(4, kBucketWh[c] * 4);
        REQUIRE(insert->Run("insert rollup").ok());
      }
    }
    REQUIRE(db->Exec("COMMIT", "fill").ok());
    for (const char* scope : {"admin", "viewer", "unit:flat1", "unit:flat2"}) {
      Result<IssuedToken> issued = IssueToken(*db, *ParseScope(scope), "test", 0);
      REQUIRE(issued.ok());
      tokens[scope] = issued->token;
    }
    AddInteropRoutes(server, ApiContext{&config, &series, config.storage.path, nullptr, nullptr,
                                        nullptr});
    REQUIRE(server.Start().ok());
    client = std::make_unique<httplib::Client>("127.0.0.1", server.port());
    client->set_read_timeout(10);
  }

  Config Load() {
    Result<Config> parsed = ParseConfig(kSite, dir.File("site.toml"));
    REQUIRE_MESSAGE(parsed.ok(), parsed.status().ToString());
    return *parsed;
  }

  httplib::Result Get(const std::string& path, const std::string& scope) {
    httplib::Headers headers;
    if (!scope.empty()) headers.emplace("Authorization", "Bearer " + tokens.at(scope));
    return client->Get(path.c_str(), headers);
  }

  EspiFeed GetFeed(const std::string& path) {
    httplib::Result result = Get(path, "viewer");
    REQUIRE(result);
    REQUIRE_MESSAGE(result->status == 200, result->body);
    CHECK(result->get_header_value("Content-Type") == "application/atom+xml");
    Result<EspiFeed> feed = ReadEspiFeed(result->body, path);
    REQUIRE_MESSAGE(feed.ok(), feed.status().ToString());
    return *feed;
  }

  testing::TempDir dir;
  Config config;
  std::unique_ptr<Database> db;
  SeriesMap series;
  std::map<std::string, std::string> tokens;
  HttpServer server;
  std::unique_ptr<httplib::Client> client;
};

std::int64_t Sum(const EspiSeries& series) {
  std::int64_t sum = 0;
  for (const EspiIntervalBlock& block : series.blocks) {
    for (const EspiIntervalReading& reading : block.readings) sum += reading.value;
  }
  return sum;
}

size_t Count(const EspiSeries& series) {
  size_t count = 0;
  for (const EspiIntervalBlock& block : series.blocks) count += block.readings.size();
  return count;
}

TEST_SUITE("api") {
  TEST_CASE_FIXTURE(InteropFixture, "who may export and reconcile what") {
    struct Row {
      std::string path;
      int admin, viewer, flat1, flat2;
    };
    const std::vector<Row> rows = {
        {"/v1/units/flat1/usage.xml?" + kDay, 200, 200, 200, 404},
        {"/v1/units/flat2/usage.xml?" + kDay, 200, 200, 404, 200},
        {"/v1/circuits/heat-pump/usage.xml?" + kDay, 200, 200, 200, 404},
        {"/v1/circuits/hall/usage.xml?" + kDay, 200, 200, 404, 404},
        {"/v1/reconciliation?" + kDay, 200, 200, 404, 404},
    };
    for (const Row& row : rows) {
      CAPTURE(row.path);
      CHECK(Get(row.path, "admin")->status == row.admin);
      CHECK(Get(row.path, "viewer")->status == row.viewer);
      CHECK(Get(row.path, "unit:flat1")->status == row.flat1);
      httplib::Result hidden = Get(row.path, "unit:flat2");
      CHECK(hidden->status == row.flat2);
      if (row.flat2 == 404) {
        CHECK(hidden->get_header_value("Content-Type") == "application/problem+json");
      }
      CHECK(Get(row.path, "")->status == 401);
    }
  }

  TEST_CASE_FIXTURE(InteropFixture, "a unit's feed: drawn and exported apart, one 23-hour block") {
    EspiFeed feed = GetFeed("/v1/units/flat1/usage.xml?" + kDay);
    REQUIRE(feed.series.size() == 2);
    const EspiSeries& drawn = feed.series[0];
    const EspiSeries& exported = feed.series[1];
    CHECK(drawn.type.flow_direction == 1);
    CHECK(exported.type.flow_direction == 19);
    CHECK(drawn.usage_point_title == "unit flat1");
    REQUIRE(drawn.blocks.size() == 1);
    CHECK(drawn.blocks[0].start_s == kDayStart / 1000);
    CHECK(drawn.blocks[0].duration_s == 82800);
    CHECK(Count(drawn) == 92);
    CHECK(Sum(drawn) == 92 * 100);
    CHECK(Sum(exported) == 92 * 20);

    EspiFeed hourly = GetFeed("/v1/circuits/heat-pump/usage.xml?" + kDay + "&interval=3600");
    REQUIRE(hourly.series.size() == 1);
    CHECK(hourly.series[0].type.interval_length_s == 3600);
    CHECK(Count(hourly.series[0]) == 23);
    CHECK(hourly.series[0].blocks[0].readings[0].value == 400);
    // Part of a day: the block is the local day cut to the range.
    EspiFeed morning = GetFeed(
        "/v1/circuits/oven/usage.xml?from=2012-03-11T06:00:00-04:00&to=2012-03-11T12:00:00-04:00");
    REQUIRE(morning.series[0].blocks.size() == 1);
    CHECK(morning.series[0].blocks[0].start_s == 1331460000);  // 10:00Z
    CHECK(morning.series[0].blocks[0].duration_s == 6 * 3600);
    CHECK(Count(morning.series[0]) == 24);
    // Re-imported as interval reads, the export gives back the same energy.
    Result<std::vector<MeterInterval>> again = DeliveredIntervals(hourly, "hourly");
    REQUIRE(again.ok());
    double wh = 0;
    for (const MeterInterval& interval : *again) wh += interval.wh;
    CHECK(wh == 92 * 100);
  }

  TEST_CASE_FIXTURE(InteropFixture, "bad export queries are problems naming the parameter") {
    httplib::Result interval = Get("/v1/units/flat1/usage.xml?" + kDay + "&interval=60", "admin");
    CHECK(interval->status == 400);
    CHECK(json::parse(interval->body)["detail"] ==
          "query parameter \"interval\": \"60\" is not an interval ESPI export supports (900 or "
          "3600 seconds)");
    httplib::Result unknown = Get("/v1/units/flat1/usage.xml?" + kDay + "&step=hour", "admin");
    CHECK(unknown->status == 400);
    httplib::Result per = Get("/v1/reconciliation?" + kDay + "&per=week", "admin");
    CHECK(per->status == 400);
    CHECK(json::parse(per->body)["detail"] == "query parameter \"per\": \"week\" is not day or cycle");
    httplib::Result cycle =
        Get("/v1/reconciliation?from=2012-03-11&to=2012-04-01&per=cycle", "admin");
    CHECK(cycle->status == 400);
    CHECK(json::parse(cycle->body)["detail"] ==
          "query parameter \"from\": not the start of a billing cycle (cycles start on day 1 of "
          "the month)");
  }

  // tests/reference/data/espi/SOURCES.md: the published sample's 92 readings of 2012-03-11
  // sum to 109,403 Wh. Imported as the main meter's intervals, they reconcile against the
  // submeters' 92 x (100 + 50 + 10) Wh = 14.72 kWh of consumption.
  TEST_CASE_FIXTURE(InteropFixture, "the published sample reconciles against the submeters") {
    const std::string name = "green-button-sample-2012-03-11-dst-day.xml";
    Result<EspiFeed> feed =
        ReadEspiFeed(testing::ReadFile(testing::ReferenceDir() / "espi" / name), name);
    REQUIRE(feed.ok());
    Result<std::vector<MeterInterval>> intervals = DeliveredIntervals(*feed, name);
    REQUIRE(intervals.ok());
    REQUIRE(ImportMainMeterIntervals(*db, *intervals, name, 1, false).ok());

    httplib::Result result = Get("/v1/reconciliation?" + kDay, "viewer");
    REQUIRE(result);
    REQUIRE_MESSAGE(result->status == 200, result->body);
    const json body = json::parse(result->body);
    CHECK(body["per"] == "day");
    CHECK(body["time_zone"] == "America/New_York");
    REQUIRE(body["periods"].size() == 1);
    const json& day = body["periods"][0];
    CHECK(day["from"] == "2012-03-11T00:00:00-05:00");
    CHECK(day["to"] == "2012-03-12T00:00:00-04:00");
    CHECK(day["main_meter_kwh"].get<double>() == doctest::Approx(109.403));
    CHECK(day["main_meter_basis"] == "main meter interval reads");
    CHECK(day["submetered_kwh"].get<double>() == doctest::Approx(14.72));
    CHECK(day["exported_kwh"].get<double>() == doctest::Approx(1.84));
    CHECK(day["coverage"].get<double>() == doctest::Approx(1.0));
    CHECK(day["remainder_kwh"].get<double>() == doctest::Approx(109.403 - 14.72));
    CHECK(day["calibration_ratio"].get<double>() == doctest::Approx(14.72 / 109.403));

    // The March cycle: the sample covers one day of it, so the meter is not known.
    httplib::Result cycle =
        Get("/v1/reconciliation?from=2012-03-01&to=2012-04-01&per=cycle", "admin");
    REQUIRE(cycle->status == 200);
    const json cycle_body = json::parse(cycle->body);
    const json& march = cycle_body["periods"][0];
    CHECK(march["main_meter_kwh"].is_null());
    CHECK(march["remainder_kwh"].is_null());
    CHECK(march["submetered_kwh"].get<double>() == doctest::Approx(14.72));
  }
}

}  // namespace
}  // namespace ampledger
