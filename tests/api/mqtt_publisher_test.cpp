// tests/api/mqtt_publisher_test.cpp
// The publisher against a real mosquitto broker on 127.0.0.1 (tests/api/mqtt_test_broker.h):
// retained live values reach early and late subscribers, events arrive in order with their
// QoS, the status topic says online and offline, a restarted broker is reconnected to, and
// with no broker at all pushes neither block nor grow memory past the bound.
#include "api/mqtt_publisher.h"

#include <doctest/doctest.h>

#include <nlohmann/json.hpp>

#include "tests/api/mqtt_test_broker.h"

namespace ampledger {
namespace {

using testing::MqttProbe;
using testing::ReceivedMessage;

MqttConfig TestMqtt(int port) {
  MqttConfig config;
  config.enabled = true;
  config.host = "127.0.0.1";
  config.port = port;
  config.client_id = "ampledger-test";
  config.topic_prefix = "test/duplex";
  config.keepalive_seconds = 10;
  config.reconnect_first_seconds = 1;
  config.reconnect_max_seconds = 2;
  return config;
}

MqttMessage Live(const std::string& circuit, double watts) {
  return {"test/duplex/circuit/" + circuit + "/power",
          nlohmann::json{{"circuit", circuit}, {"watts", watts}}.dump(), 0, true};
}

MqttMessage Event(int id) {
  return {"test/duplex/event/raised/circuit/dryer", nlohmann::json{{"id", id}}.dump(), 1, false};
}

std::vector<int> EventIds(MqttProbe& probe) {
  std::vector<int> ids;
  for (const ReceivedMessage& m : probe.On("test/duplex/event/raised/circuit/dryer")) {
    ids.push_back(nlohmann::json::parse(m.payload)["id"].get<int>());
  }
  return ids;
}

TEST_SUITE("api") {

TEST_CASE("mqtt publisher: retained live values, events in order, online and offline status") {
  testing::TempDir dir;
  testing::MosquittoBroker broker(dir);
  broker.Start();
  const MqttConfig config = TestMqtt(broker.port());
  MqttProbe early(broker.port(), "test/duplex/#");
  {
    MqttPublisher publisher(config, 2);
    REQUIRE(publisher.Start().ok());
    REQUIRE(MqttProbe::WaitFor([&] { return !early.On("test/duplex/status").empty(); }));
    nlohmann::json online = nlohmann::json::parse(early.On("test/duplex/status")[0].payload);
    CHECK(online["state"] == "online");
    CHECK(online["since"].is_string());

    publisher.PushLive(0, Live("dryer", 4480.5));
    publisher.PushLive(1, Live("heater", 12));
    publisher.PushEvent(Event(1));
    publisher.PushEvent(Event(2));
    REQUIRE(MqttProbe::WaitFor([&] { return EventIds(early).size() == 2; }));
    REQUIRE(MqttProbe::WaitFor([&] {
      return early.On("test/duplex/circuit/dryer/power").size() == 1 &&
             early.On("test/duplex/circuit/heater/power").size() == 1;
    }));
    CHECK(EventIds(early) == std::vector<int>{1, 2});
    const ReceivedMessage live = early.On("test/duplex/circuit/dryer/power")[0];
    CHECK(nlohmann::json::parse(live.payload)["watts"] == 4480.5);
    // MQTT 3.1.1 section 3.3.1.3: a message sent to a subscription that already existed
    // carries retain 0, even when the broker retained it; a later subscriber gets retain 1.
    CHECK_FALSE(live.retain);
    CHECK(early.On("test/duplex/event/raised/circuit/dryer")[0].qos == 1);

    MqttProbe late(broker.port(), "test/duplex/#");
    REQUIRE(MqttProbe::WaitFor([&] {
      return late.On("test/duplex/circuit/dryer/power").size() == 1 &&
             late.On("test/duplex/circuit/heater/power").size() == 1 &&
             late.On("test/duplex/status").size() == 1;
    }));
    CHECK(late.On("test/duplex/circuit/dryer/power")[0].retain);
    CHECK(late.On("test/duplex/status")[0].retain);
    CHECK(nlohmann::json::parse(late.On("test/duplex/circuit/heater/power")[0].payload)["watts"] ==
          12);
    CHECK(EventIds(late).empty());  // events are not retained

    CHECK(publisher.stats().connected);
    CHECK(publisher.stats().connects == 1);
    // status + 2 live values + 2 events
    REQUIRE(MqttProbe::WaitFor([&] { return publisher.stats().published >= 5; }));
    publisher.Stop();
    CHECK_FALSE(publisher.stats().connected);
  }
  REQUIRE(MqttProbe::WaitFor([&] { return early.On("test/duplex/status").size() == 2; }));
  nlohmann::json offline = nlohmann::json::parse(early.On("test/duplex/status")[1].payload);
  CHECK(offline["state"] == "offline");
  CHECK(offline["reason"] == "stopped");
}

TEST_CASE("mqtt publisher: reconnects after the broker restarts, with backoff") {
  testing::TempDir dir;
  testing::MosquittoBroker broker(dir);
  broker.Start();
  const MqttConfig config = TestMqtt(broker.port());  // outlives the publisher
  MqttPublisher publisher(config, 1);
  CHECK(publisher.RetryDelay(1) == 1000);
  CHECK(publisher.RetryDelay(2) == 2000);
  CHECK(publisher.RetryDelay(3) == 2000);  // reconnect_max_seconds
  CHECK(publisher.RetryDelay(1000) == 2000);
  REQUIRE(publisher.Start().ok());
  REQUIRE(MqttProbe::WaitFor([&] { return publisher.stats().connected.load(); }));

  broker.Stop();
  REQUIRE(MqttProbe::WaitFor([&] { return !publisher.stats().connected; }));
  publisher.PushLive(0, Live("dryer", 900));  // while the broker is away
  publisher.PushEvent(Event(3));
  CHECK(publisher.outbox().events_waiting() == 1);

  broker.Start();  // the same port, no retained messages (persistence false)
  REQUIRE(MqttProbe::WaitFor([&] { return publisher.stats().connects == 2; }));
  CHECK(publisher.stats().disconnects == 1);
  REQUIRE(MqttProbe::WaitFor([&] { return publisher.outbox().events_waiting() == 0; }));
  // The value pushed while away was kept and published (retained) after the reconnect.
  MqttProbe probe(broker.port(), "test/duplex/#");
  REQUIRE(MqttProbe::WaitFor(
      [&] { return probe.On("test/duplex/circuit/dryer/power").size() == 1; }));
  CHECK(nlohmann::json::parse(probe.On("test/duplex/circuit/dryer/power")[0].payload)["watts"] ==
        900);
  publisher.PushEvent(Event(4));
  REQUIRE(MqttProbe::WaitFor([&] {
    return !EventIds(probe).empty() && EventIds(probe).back() == 4;
  }));
  // Event 3 went to the broker before this probe subscribed, but the broker may still have
  // been passing it on; it arrives before 4 if at all.
  const std::vector<int> ids = EventIds(probe);
  CHECK((ids == std::vector<int>{4} || ids == std::vector<int>{3, 4}));
  CHECK(publisher.stats().connects == 2);
  publisher.Stop();
}

TEST_CASE("mqtt publisher: with no broker, pushes return at once and the queue stays bounded") {
  MqttConfig config = TestMqtt(testing::FreeLoopbackPort(SOCK_STREAM));  // nobody listens
  config.queue_events = 100;
  MqttPublisher publisher(config, 2);
  REQUIRE(publisher.Start().ok());
  constexpr int kPushes = 100000;
  for (int i = 0; i < kPushes; ++i) {
    publisher.PushEvent(Event(i));
    publisher.PushLive(i % 2, Live(i % 2 == 0 ? "dryer" : "heater", i));
  }
  // Memory: at most queue_events events and one value per circuit, whatever was pushed.
  CHECK(publisher.outbox().events_waiting() == 100);
  CHECK(publisher.outbox().events_dropped() == kPushes - 100);
  CHECK(publisher.outbox().live_waiting() == 2);
  CHECK(publisher.outbox().live_superseded() == kPushes - 2);
  REQUIRE(MqttProbe::WaitFor([&] { return publisher.stats().connect_failures >= 1; }));
  CHECK_FALSE(publisher.stats().connected);
  CHECK(publisher.stats().published == 0);
  publisher.Stop();
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
