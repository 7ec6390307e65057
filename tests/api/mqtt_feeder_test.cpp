// tests/api/mqtt_feeder_test.cpp
// From committed readings to a subscriber: real SQLite, the real writer and alert recorder,
// a real mosquitto broker on 127.0.0.1. A heater over its level raises an alert, a dryer run
// ends in a cycle_finished event, and both circuits' live power arrives retained, each with
// the documented topic and payload (api/MQTT.md).
#include "api/mqtt_feeder.h"

#include <doctest/doctest.h>

#include <future>
#include <nlohmann/json.hpp>

#include "api/event_json.h"
#include "api/rfc3339.h"
#include "config/wall_clock.h"
#include "storage/alert_recorder.h"
#include "storage/reading_writer.h"
#include "tests/api/mqtt_test_broker.h"

namespace ampledger {
namespace {

using nlohmann::json;
using testing::MqttProbe;

Config Site(const testing::TempDir& dir, int port) {
  const std::string toml = R"toml(
[site]
name = "Feeder test"
time_zone = "America/Chicago"
nominal_volts = [120, 240]
[[node]]
id = "panel"
auth = "plain"
[[node.channel]]
id = "ct1"
[[node.channel]]
id = "ct2"
[[circuit]]
id = "dryer"
name = "Clothes dryer"
channels = ["panel/ct1"]
[[circuit]]
id = "heater"
channels = ["panel/ct2"]
[[alert]]
id = "heater-high"
kind = "power_above"
circuits = ["heater"]
level_watts = 1000
clear_watts = 500
[[alert]]
id = "dryer-done"
kind = "cycle_done"
circuits = ["dryer"]
level_watts = 1000
clear_watts = 50
quiet_seconds = 20
min_run_seconds = 20
[storage]
path = "feeder.db"
batch_millis = 5
[mqtt]
enabled = true
host = "127.0.0.1"
port = )toml" + std::to_string(port) + R"toml(
topic_prefix = "test/feeder"
live_interval_seconds = 1
reconnect_first_seconds = 1
reconnect_max_seconds = 2
)toml";
  Result<Config> config = ParseConfig(toml, dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  return *config;
}

TEST_SUITE("api") {

TEST_CASE("mqtt feeder: live power per circuit, an alert and a finished cycle reach a subscriber") {
  testing::TempDir dir;
  testing::MosquittoBroker broker(dir);
  broker.Start();
  Config config = Site(dir, broker.port());
  std::unique_ptr<Database> db = std::move(Database::Open(config.storage).value());
  SeriesMap series = RegisterSeries(*db, config).value();
  std::unique_ptr<AlertRecorder> recorder =
      std::move(AlertRecorder::Create(config, *db, AlertRecorderOptions{}).value());
  WriterOptions writer_options;
  writer_options.hook = recorder.get();
  std::unique_ptr<ReadingWriter> writer =
      std::move(ReadingWriter::Start(config, db.get(), series, writer_options).value());
  recorder->Start(writer.get());

  MqttProbe probe(broker.port(), "test/feeder/#");
  MqttPublisher publisher(config.mqtt, static_cast<int>(config.circuits.size()));
  REQUIRE(publisher.Start().ok());
  MqttFeeder feeder(config, series, config.storage.path, &recorder->feed(), &publisher);
  feeder.Start();

  // Ten-second readings ending in the last few minutes (live values look back one hour).
  const UnixMs base = WallClockMs() / 10'000 * 10'000 - 600'000;
  auto store = [&](int channel, UnixMs end_ms, double watts) {
    ChannelReading r;
    r.channel = channel;
    r.end_ms = end_ms;
    r.duration_ms = 10'000;
    r.amps = watts / 240;
    r.volts = 240;
    r.real_watts = watts;
    r.apparent_va = watts;
    std::promise<Status> done;
    writer->Submit(ReadingBatch{{r}, {}}, [&](const Status& s) { done.set_value(s); });
    REQUIRE(done.get_future().get().ok());
  };
  store(1, base + 10'000, 1500);  // heater over its level: raised
  for (int i = 1; i <= 6; ++i) store(0, base + i * 10'000, 2000);   // a one-minute run
  for (int i = 7; i <= 10; ++i) store(0, base + i * 10'000, 10);    // then quiet

  const std::string raised = "test/feeder/event/raised/circuit/heater";
  const std::string finished = "test/feeder/event/cycle_finished/circuit/dryer";
  REQUIRE(MqttProbe::WaitFor([&] {
    return probe.On(raised).size() == 1 && probe.On(finished).size() == 1;
  }));
  // Each event's payload is the event as /v1/events gives it (api/event_json.h).
  Result<LocalTime> chicago = LocalTime::ForZone("America/Chicago");
  REQUIRE(chicago.ok());
  for (const std::string& topic : {raised, finished}) {
    const json payload = json::parse(probe.On(topic)[0].payload);
    Result<StoredEvent> stored = ReadEvent(*Database::OpenReader(config.storage.path).value(),
                                           payload["id"].get<std::int64_t>());
    REQUIRE(stored.ok());
    CHECK(payload == EventJson(config, *chicago, *stored));
    CHECK_FALSE(probe.On(topic)[0].retain);
    CHECK(probe.On(topic)[0].qos == 1);  // [mqtt] event_qos default
  }
  const json cycle = json::parse(probe.On(finished)[0].payload);
  CHECK(cycle["kind"] == "cycle_finished");
  CHECK(cycle["rule"] == "dryer-done");
  CHECK(cycle["rule_kind"] == "cycle_done");
  // The run: 2000 W for the 60 s from base to base + 60 s = 2000 x 60 / 3600 Wh (by hand).
  CHECK(cycle["values"]["energy_wh"].get<double>() == doctest::Approx(2000.0 * 60 / 3600));

  const std::string dryer = "test/feeder/circuit/dryer/power";
  const std::string heater = "test/feeder/circuit/heater/power";
  REQUIRE(MqttProbe::WaitFor([&] {
    return !probe.On(heater).empty() && !probe.On(dryer).empty() &&
           json::parse(probe.On(dryer).back().payload)["watts"] == 10.0;
  }));
  const json live = json::parse(probe.On(dryer).back().payload);
  CHECK(live["circuit"] == "dryer");
  CHECK(live["name"] == "Clothes dryer");
  CHECK(live["direction"] == "consumption");
  CHECK(live["va"] == 10.0);
  CHECK(live["volts"] == 240.0);
  CHECK(live["amps"].get<double>() == doctest::Approx(10.0 / 240));
  CHECK(live["quality"] == "measured");
  CHECK(live["interval_s"] == 10.0);
  CHECK(live["reading_end_ms"] == base + 100'000);
  // RFC 3339 with the site's offset: America/Chicago is UTC-6 or UTC-5 (IANA tz data).
  const std::string end = live["reading_end"];
  CHECK((end.ends_with("-06:00") || end.ends_with("-05:00")));
  CHECK(ParseRfc3339(end) == std::optional<UnixMs>(base + 100'000));
  CHECK(live["units"]["watts"] == "W");
  CHECK(json::parse(probe.On(heater).back().payload)["watts"] == 1500.0);

  // A subscriber that comes later gets each circuit's newest value at once (retained).
  MqttProbe late(broker.port(), "test/feeder/circuit/#");
  REQUIRE(MqttProbe::WaitFor([&] { return late.On(dryer).size() == 1 && late.On(heater).size() == 1; }));
  CHECK(late.On(dryer)[0].retain);
  CHECK(json::parse(late.On(dryer)[0].payload)["watts"] == 10.0);

  feeder.Stop();
  publisher.Stop();
  recorder->Stop();
  writer->Stop();
}

TEST_CASE("mqtt feeder: live_change_watts skips small moves of a circuit's power") {
  testing::TempDir dir;
  Config config = Site(dir, 1);  // the publisher is never started: its outbox keeps all
  config.mqtt.live_change_watts = 100;
  config.mqtt.live_refresh_seconds = 3600;
  config.alerts.clear();
  std::unique_ptr<Database> db = std::move(Database::Open(config.storage).value());
  SeriesMap series = RegisterSeries(*db, config).value();
  std::unique_ptr<ReadingWriter> writer =
      std::move(ReadingWriter::Start(config, db.get(), series).value());
  MqttPublisher publisher(config.mqtt, static_cast<int>(config.circuits.size()));
  MqttFeeder feeder(config, series, config.storage.path, nullptr, &publisher);
  feeder.Start();
  const UnixMs base = WallClockMs() / 10'000 * 10'000 - 600'000;
  // Both circuits in one transaction, so one look at the database sees both.
  auto store = [&](int step, double dryer_watts, double heater_watts) {
    ReadingBatch batch;
    for (auto [channel, watts] : {std::pair{0, dryer_watts}, std::pair{1, heater_watts}}) {
      ChannelReading r;
      r.channel = channel;
      r.end_ms = base + step * 10'000;
      r.duration_ms = 10'000;
      r.real_watts = watts;
      r.apparent_va = watts;
      batch.readings.push_back(r);
    }
    std::promise<Status> done;
    writer->Submit(std::move(batch), [&](const Status& s) { done.set_value(s); });
    REQUIRE(done.get_future().get().ok());
  };
  const MqttOutbox& outbox = publisher.outbox();
  store(1, 1000, 0);
  REQUIRE(MqttProbe::WaitFor([&] { return outbox.live_waiting() == 2; }));
  store(2, 1050, 5000);  // the dryer moved 50 W: skipped; the heater 5000 W: pushed
  REQUIRE(MqttProbe::WaitFor([&] { return outbox.live_superseded() >= 1; }));
  CHECK(outbox.live_superseded() == 1);
  store(3, 1200, 0);  // 200 W from the 1000 W last pushed: pushed, and the heater again
  REQUIRE(MqttProbe::WaitFor([&] { return outbox.live_superseded() >= 3; }));
  CHECK(outbox.live_superseded() == 3);
  feeder.Stop();
  writer->Stop();
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
