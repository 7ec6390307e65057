// tests/api/mqtt_outbox_test.cpp
// The outbox's bounds: one waiting value per circuit, at most max_events events, oldest
// dropped first, and a failed event put back in front.
#include "api/mqtt_outbox.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

MqttMessage Message(const std::string& topic) { return {topic, "{}", 1, false}; }

TEST_SUITE("api") {

TEST_CASE("mqtt outbox: the newest live value per circuit waits") {
  MqttOutbox outbox(3, 10);
  outbox.PushLive(2, Message("c2-old"));
  outbox.PushLive(0, Message("c0"));
  outbox.PushLive(2, Message("c2-new"));
  outbox.PushLive(7, Message("no such circuit"));  // ignored
  CHECK(outbox.live_waiting() == 2);
  CHECK(outbox.live_superseded() == 1);
  std::vector<MqttMessage> taken = outbox.TakeLive();
  REQUIRE(taken.size() == 2);
  CHECK(taken[0].topic == "c0");
  CHECK(taken[1].topic == "c2-new");
  CHECK(outbox.live_waiting() == 0);
  CHECK(outbox.TakeLive().empty());
}

TEST_CASE("mqtt outbox: events in order, the oldest dropped beyond the bound") {
  MqttOutbox outbox(0, 3);
  for (const char* topic : {"e1", "e2", "e3", "e4", "e5"}) outbox.PushEvent(Message(topic));
  CHECK(outbox.events_waiting() == 3);
  CHECK(outbox.events_dropped() == 2);
  std::optional<MqttMessage> first = outbox.TakeEvent();
  REQUIRE(first);
  CHECK(first->topic == "e3");
  outbox.ReturnEvent(std::move(*first));  // its publish failed: first again
  CHECK(outbox.TakeEvent()->topic == "e3");
  CHECK(outbox.TakeEvent()->topic == "e4");
  outbox.PushEvent(Message("e6"));
  outbox.PushEvent(Message("e7"));
  outbox.ReturnEvent(Message("e4-again"));  // full: the returned (oldest) one is dropped
  CHECK(outbox.events_dropped() == 3);
  CHECK(outbox.TakeEvent()->topic == "e5");
  CHECK(outbox.TakeEvent()->topic == "e6");
  CHECK(outbox.TakeEvent()->topic == "e7");
  CHECK_FALSE(outbox.TakeEvent());
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
