// tests/api/api_fixture.h
// The API through a real HttpServer on 127.0.0.1 over a real SQLite file fed through the
// ReadingWriter, for the route tests (api_routes_test.cpp and the tests of each route file):
// an invented duplex with a time-of-use tariff, readings around the 2026 DST changes of
// America/Chicago, and a token of each scope.
#pragma once

#include <doctest/doctest.h>
#include <httplib.h>

#include <chrono>
#include <filesystem>
#include <future>
#include <nlohmann/json.hpp>

#include "api/api_routes.h"
#include "api/rfc3339.h"
#include "api/token.h"
#include "daemon/metering/tariff_schedule.h"
#include "storage/queries.h"
#include "storage/token_store.h"
#include "test_util.h"

namespace ampledger {
namespace {

using nlohmann::json;

// The invented time-of-use tariff of the fixture (prices are ours, not any utility's): one
// season all year; peak on weekdays 16:00-21:00, overnight every day 00:00-06:00, off-peak
// otherwise; a per-kWh adder, a fixed charge per cycle and a tax. From 2027 the peak price
// rises (a dated tariff change).
inline std::string TariffToml(const char* peak_price) {
  return std::string(R"toml(
name = "Maple Row test time-of-use"
currency = "USD"
[[season]]
name = "all-year"
from = "01-01"
to = "12-31"
default_period = "off-peak"
[[season.period]]
name = "peak"
price = )toml") + peak_price + R"toml(
[[season.period]]
name = "off-peak"
price = 0.10
[[season.period]]
name = "overnight"
price = 0.06
[[season.window]]
period = "peak"
from = "16:00"
to = "21:00"
days = ["weekday"]
[[season.window]]
period = "overnight"
from = "00:00"
to = "06:00"
[[adder]]
name = "Delivery"
price = 0.02
[[fixed]]
name = "Service charge"
amount = 10.00
per = "cycle"
[[adjustment]]
name = "Sales tax 5%"
percent = 5
)toml";
}

inline Config SiteConfig(const testing::TempDir& dir) {
  // An invented duplex in the US Central zone: unit a has two circuits, unit b one, and the
  // hall lights belong to no unit.
  std::filesystem::create_directories(dir.File("tariffs"));
  testing::WriteFile(dir.File("tariffs/maple-tou.toml"), TariffToml("0.25"));
  testing::WriteFile(dir.File("tariffs/maple-tou-2027.toml"), TariffToml("0.30"));
  const std::string toml = R"toml(
[site]
name = "Maple Row duplex"
time_zone = "America/Chicago"
nominal_volts = [120]
currency = "USD"
tariff = "maple-tou"
[[site.tariff_change]]
from = 2027-01-01
tariff = "maple-tou-2027"

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
id = "a-heat"
channels = ["panel/ct1"]
[[circuit]]
id = "a-kitchen"
channels = ["panel/ct4"]
[[circuit]]
id = "b-heat"
channels = ["panel/ct2"]
[[circuit]]
id = "hall"
channels = ["panel/ct3"]

[[unit]]
id = "a"
circuits = ["a-heat", "a-kitchen"]
[[unit]]
id = "b"
circuits = ["b-heat"]

[storage]
path = "site.db"

[ingest]
listen = "127.0.0.1:0"

[http]
listen = "127.0.0.1:0"
threads = 2
)toml";
  Result<Config> config = ParseConfig(toml, dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  return *config;
}

inline UnixMs At(const char* text) { return ParseRfc3339(text).value(); }

constexpr UnixMs kReadingMs = 5 * 60 * 1000;

// Mean power of channel `channel` over the 5-minute interval ending at `end_ms`: a cycling
// load per channel, so hours differ.
inline double Watts(int channel, UnixMs end_ms) {
  const std::int64_t interval = end_ms / kReadingMs;
  return 300.0 * (channel + 1) + 40.0 * ((interval / 7) % 5);
}

// The data: two stretches of 5-minute readings around America/Chicago's DST changes of 2026
// (IANA tz: 2026-03-08 and 2026-11-01), and one recent reading per channel for /v1/live.
inline const std::vector<TimeRange>& Stretches() {
  static const std::vector<TimeRange> kStretches = {
      {At("2026-03-07T00:00:00-06:00"), At("2026-03-10T00:00:00-05:00")},
      {At("2026-10-31T00:00:00-05:00"), At("2026-11-03T00:00:00-06:00")},
  };
  return kStretches;
}

// Energy the readings ending in (from, to] carry, Wh: the truth for a bucket-aligned range.
inline double TruthWh(int channel, UnixMs from_ms, UnixMs to_ms) {
  double wh = 0;
  for (UnixMs end = from_ms + kReadingMs; end <= to_ms; end += kReadingMs) {
    wh += Watts(channel, end) * kReadingMs / 3.6e6;
  }
  return wh;
}

struct ApiFixture {
  ApiFixture()
      : config(SiteConfig(dir)), stats({"panel"}), server(config.http) {
    db = std::move(Database::Open(config.storage).value());
    series = RegisterSeries(*db, config).value();
    WriterOptions options;
    // A fixed clock shortly after the data, so raw retention never reaches it.
    options.clock = [] { return At("2026-11-10T00:00:00Z"); };
    writer = std::move(ReadingWriter::Start(config, db.get(), series, options).value());
    ReadingBatch batch;
    for (const TimeRange& stretch : Stretches()) {
      for (UnixMs end = stretch.start_ms + kReadingMs; end <= stretch.end_ms; end += kReadingMs) {
        for (int channel = 0; channel < 4; ++channel) batch.readings.push_back(
            Reading(channel, end, Watts(channel, end)));
      }
    }
    const UnixMs now = std::chrono::duration_cast<std::chrono::milliseconds>(
                           std::chrono::system_clock::now().time_since_epoch())
                           .count();
    for (int channel = 0; channel < 4; ++channel) {
      batch.readings.push_back(Reading(channel, now - 1000, 100.0 * (channel + 1)));
    }
    std::promise<Status> stored;
    writer->Submit(std::move(batch), [&](const Status& s) { stored.set_value(s); });
    REQUIRE(stored.get_future().get().ok());
    writer->Stop();  // writes the open rollup buckets; Health() stays OK

    Result<std::unique_ptr<UdpReceiver>> udp = UdpReceiver::Open(config.ingest);
    REQUIRE(udp.ok());
    receiver = std::move(udp).value();
    tokens_db = std::move(Database::Open(config.storage).value());
    admin = Issue("admin");
    viewer = Issue("viewer");
    unit_a = Issue("unit:a");
    unit_b = Issue("unit:b");
    tariffs = TariffSchedule::Create(config).value();
    ApiContext context{&config, &series, config.storage.path, writer.get(), &stats,
                       receiver.get()};
    context.tariffs = &tariffs;
    AddApiRoutes(server, context);
    REQUIRE(server.Start().ok());
    client = std::make_unique<httplib::Client>("127.0.0.1", server.port());
    client->set_read_timeout(10);
  }

  static ChannelReading Reading(int channel, UnixMs end_ms, double watts) {
    ChannelReading r;
    r.channel = channel;
    r.end_ms = end_ms;
    r.duration_ms = static_cast<std::int32_t>(kReadingMs);
    r.real_watts = watts;
    r.apparent_va = watts * 1.1;
    r.volts = 120;
    r.amps = r.apparent_va / 120;
    return r;
  }

  std::string Issue(const char* scope) {
    Result<IssuedToken> issued = IssueToken(*tokens_db, *ParseScope(scope), "test", 0);
    REQUIRE(issued.ok());
    return issued->token;
  }

  httplib::Result Get(const std::string& path, const std::string& token,
                      const std::string& accept = "") {
    httplib::Headers headers;
    if (!token.empty()) headers.emplace("Authorization", "Bearer " + token);
    if (!accept.empty()) headers.emplace("Accept", accept);
    return client->Get(path.c_str(), headers);
  }

  json GetJson(const std::string& path, const std::string& token) {
    httplib::Result result = Get(path, token);
    REQUIRE(result);
    REQUIRE_MESSAGE(result->status == 200, (path + ": " + result->body));
    return json::parse(result->body);
  }

  // Rollup energy of `circuits` over [from, to) straight from storage, Wh.
  double RollupWh(const std::vector<int>& circuits, UnixMs from_ms, UnixMs to_ms) {
    auto reader = std::move(Database::OpenReader(config.storage.path).value());
    double wh = 0;
    for (int circuit : circuits) {
      // Kept in a variable: a range-for over .value() of a temporary would dangle.
      Result<std::vector<CircuitBucket>> buckets =
          ReadCircuitBuckets(*reader, series, circuit, from_ms, to_ms);
      REQUIRE(buckets.ok());
      for (const CircuitBucket& bucket : *buckets) wh += bucket.real_wh;
    }
    return wh;
  }

  testing::TempDir dir;
  Config config;
  IngestStats stats;
  std::unique_ptr<Database> db;
  SeriesMap series;
  std::unique_ptr<ReadingWriter> writer;
  std::unique_ptr<UdpReceiver> receiver;
  std::unique_ptr<Database> tokens_db;  // as `ampledger token` would write
  TariffSchedule tariffs;
  std::string admin, viewer, unit_a, unit_b;
  HttpServer server;
  std::unique_ptr<httplib::Client> client;
};

// A problem document (RFC 9457) whose status matches the response's.
inline json ProblemOf(const httplib::Result& result) {
  REQUIRE(result);
  CHECK(result->get_header_value("Content-Type") == "application/problem+json");
  json problem = json::parse(result->body);
  CHECK(problem["status"] == result->status);
  CHECK(problem["type"] == "about:blank");
  return problem;
}

const std::string kSpringDay =
    "from=2026-03-08T00:00:00-06:00&to=2026-03-09T00:00:00-05:00";
const std::string kFallDay = "from=2026-11-01T00:00:00-05:00&to=2026-11-02T00:00:00-06:00";
// A series of every step that has periods, for circuits and units; in March b-heat has
// readings on 3 of its days, so most of its points have no data.
const std::vector<std::string> kSeriesOfEveryStep = {
    "/v1/circuits/a-heat/series?" + kSpringDay + "&step=hour",
    "/v1/circuits/a-heat/series?" + kSpringDay + "&step=15m",
    "/v1/units/a/series?" + kFallDay + "&step=hour",
    "/v1/circuits/b-heat/series?from=2026-03-01T00:00:00-06:00&to=2026-04-01T00:00:00-05:00"
    "&step=day",
    "/v1/units/b/series?from=2026-03-01T00:00:00-06:00&to=2026-05-01T00:00:00-05:00&step=month",
};

inline std::vector<std::string> Ids(const json& list) {
  std::vector<std::string> ids;
  for (const json& entry : list) ids.push_back(entry["id"]);
  return ids;
}

}  // namespace
}  // namespace ampledger
