// tests/api/mqtt_messages_test.cpp
// Topics and live payloads: a two-channel circuit sums its channels, the worst quality wins,
// ids become topic levels, and the payload names its units.
#include "api/mqtt_messages.h"

#include <doctest/doctest.h>

#include <nlohmann/json.hpp>

#include "tests/config/config_text.h"

namespace ampledger {
namespace {

using nlohmann::json;

TEST_SUITE("api") {

TEST_CASE("mqtt messages: topics under the prefix") {
  StoredEvent event;
  event.kind = "cycle_finished";
  event.subject = "circuit:laundry-dryer";
  CHECK(MqttEventTopic("ampledger/tannery-street", event) ==
        "ampledger/tannery-street/event/cycle_finished/circuit/laundry-dryer");
  event.kind = "silent";
  event.subject = "node:panel-east";
  CHECK(MqttEventTopic("home", event) == "home/event/silent/node/panel-east");
  CHECK(MqttLiveTopic("home", "upper.range") == "home/circuit/upper.range/power");
}

TEST_CASE("mqtt messages: a circuit's live value sums its channels") {
  Result<Config> parsed = ParseConfig(testing::kMinimalConfig +
                                          "[[circuit]]\n"
                                          "id = \"range\"\n"
                                          "channels = [\"n1/ct2\"]\n",
                                      "site.toml");
  REQUIRE(parsed.ok());
  Config config = *parsed;
  config.circuits[1].channels = {{"n1", "ct1"}, {"n1", "ct2"}};  // both legs of one load
  config.circuits.erase(config.circuits.begin());
  config.IndexChannels();
  ChannelReading leg1;
  leg1.channel = 0;
  leg1.end_ms = 1'795'888'680'000;  // 2026-11-28T17:58:00Z
  leg1.duration_ms = 10'000;
  leg1.amps = 10;
  leg1.volts = 230;
  leg1.real_watts = 2200;
  leg1.apparent_va = 2300;
  ChannelReading leg2 = leg1;
  leg2.channel = 1;
  leg2.end_ms -= 10'000;  // one interval older
  leg2.real_watts = 1000;
  leg2.apparent_va = 1100;
  leg2.amps = 5;
  leg2.quality = Quality::kEstimated;
  std::vector<CircuitLive> live = SumCircuitLive(config, {leg1, leg2});
  REQUIRE(live.size() == 1);
  CHECK(live[0].circuit == 0);
  CHECK(live[0].watts == 3200);
  CHECK(live[0].va == 3400);
  CHECK(live[0].amps == 15);
  CHECK(live[0].quality == Quality::kEstimated);
  CHECK(live[0].reading_end_ms == leg1.end_ms);

  Result<LocalTime> paris = LocalTime::ForZone("Europe/Paris");
  REQUIRE(paris.ok());
  MqttMessage message = LiveMessage(config, *paris, live[0]);
  CHECK(message.topic == "ampledger/test-house/circuit/range/power");
  CHECK(message.retain);
  CHECK(message.qos == 0);
  const json payload = json::parse(message.payload);
  CHECK(payload["circuit"] == "range");
  CHECK(payload["watts"] == 3200.0);
  CHECK(payload["quality"] == "estimated");
  CHECK(payload["interval_s"] == 10.0);
  // Paris keeps UTC+1 in winter (IANA tz data, Europe/Paris).
  CHECK(payload["reading_end"] == "2026-11-28T18:58:00+01:00");
  CHECK(payload["reading_end_ms"] == 1'795'888'680'000);
  CHECK(payload["units"] == json{{"watts", "W"}, {"va", "VA"}, {"amps", "A"}, {"volts", "V"},
                                 {"interval_s", "s"}, {"reading_end_ms", "ms since 1970-01-01Z"}});
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
