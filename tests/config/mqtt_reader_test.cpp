// tests/config/mqtt_reader_test.cpp
// The [mqtt] table: defaults, every key read, and the whole message of each error.
#include "config/mqtt_reader.h"

#include <doctest/doctest.h>

#include <fstream>

#include "tests/config/config_text.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

using testing::ErrorOf;
using testing::kMinimalConfig;

TEST_SUITE("config") {

TEST_CASE("mqtt is off by default, with a prefix and client id made from the site name") {
  Result<Config> config = ParseConfig(kMinimalConfig, "site.toml");
  REQUIRE(config.ok());
  CHECK_FALSE(config->mqtt.enabled);
  CHECK(config->mqtt.topic_prefix == "ampledger/test-house");
  CHECK(config->mqtt.client_id == "ampledger-test-house");
  CHECK(config->mqtt.port == 1883);
  CHECK(config->mqtt.event_qos == 1);
  CHECK(config->mqtt.queue_events == 1000);
}

TEST_CASE("every mqtt key is read") {
  testing::TempDir dir;
  {
    std::ofstream(dir.File("broker.pass")) << "s3cret-words\n";
  }
  Result<Config> config = ParseConfig(
      kMinimalConfig +
          "[mqtt]\n"
          "enabled = true\n"
          "host = \"broker.lan\"\n"
          "port = 8883\n"
          "client_id = \"meter-room\"\n"
          "topic_prefix = \"home/energy\"\n"
          "username = \"ampledger\"\n"
          "password_file = \"broker.pass\"\n"
          "keepalive_seconds = 30\n"
          "event_qos = 2\n"
          "queue_events = 50\n"
          "live_interval_seconds = 2\n"
          "live_change_watts = 25\n"
          "live_refresh_seconds = 120\n"
          "reconnect_first_seconds = 2\n"
          "reconnect_max_seconds = 30\n",
      dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().message());
  const MqttConfig& mqtt = config->mqtt;
  CHECK(mqtt.enabled);
  CHECK(mqtt.host == "broker.lan");
  CHECK(mqtt.port == 8883);
  CHECK(mqtt.client_id == "meter-room");
  CHECK(mqtt.topic_prefix == "home/energy");
  CHECK(mqtt.username == "ampledger");
  CHECK(mqtt.password == "s3cret-words");
  CHECK(mqtt.keepalive_seconds == 30);
  CHECK(mqtt.event_qos == 2);
  CHECK(mqtt.queue_events == 50);
  CHECK(mqtt.live_interval_seconds == 2);
  CHECK(mqtt.live_change_watts == 25);
  CHECK(mqtt.live_refresh_seconds == 120);
  CHECK(mqtt.reconnect_first_seconds == 2);
  CHECK(mqtt.reconnect_max_seconds == 30);
}

TEST_CASE("mqtt errors name file, line and key") {
  const std::string head = kMinimalConfig + "[mqtt]\n";  // [mqtt] is line 17
  CHECK(ErrorOf(head + "enabled = true\n") ==
        "site.toml:17: mqtt.host: missing; expected a string");
  CHECK(ErrorOf(head + "host = \"broker lan\"\n") ==
        "site.toml:18: mqtt.host: expected a host name or an IP address (no brackets, no "
        "port), got \"broker lan\"");
  CHECK(ErrorOf(head + "port = 70000\n") ==
        "site.toml:18: mqtt.port: expected an integer from 1 to 65535, got 70000");
  CHECK(ErrorOf(head + "port = 0\n") ==
        "site.toml:18: mqtt.port: expected an integer from 1 to 65535, got 0");
  CHECK(ErrorOf(head + "topic_prefix = \"home/+/energy\"\n") ==
        "site.toml:18: mqtt.topic_prefix: must not contain the wildcard '+', got "
        "\"home/+/energy\"");
  CHECK(ErrorOf(head + "topic_prefix = \"home/#\"\n") ==
        "site.toml:18: mqtt.topic_prefix: must not contain the wildcard '#', got \"home/#\"");
  CHECK(ErrorOf(head + "topic_prefix = \"home/\"\n") ==
        "site.toml:18: mqtt.topic_prefix: expected topic levels joined by '/', none empty, "
        "got \"home/\"");
  CHECK(ErrorOf(head + "topic_prefix = \"$SYS/x\"\n") ==
        "site.toml:18: mqtt.topic_prefix: must not start with '$' (MQTT keeps such topics for "
        "the broker), got \"$SYS/x\"");
  CHECK(ErrorOf(head + "topic_prefix = \"\"\n") ==
        "site.toml:18: mqtt.topic_prefix: expected a topic prefix such as \"ampledger/home\", "
        "got \"\"");
  CHECK(ErrorOf(head + "client_id = \"a b\"\n") ==
        "site.toml:18: mqtt.client_id: expected 1 to 64 letters, digits, '.', '_' or '-', got "
        "\"a b\"");
  CHECK(ErrorOf(head + "event_qos = 3\n") ==
        "site.toml:18: mqtt.event_qos: expected an integer from 0 to 2, got 3");
  CHECK(ErrorOf(head + "queue_events = 0\n") ==
        "site.toml:18: mqtt.queue_events: expected an integer from 1 to 100000, got 0");
  CHECK(ErrorOf(head + "password = \"pw\"\n") ==
        "site.toml:18: mqtt.password: a password needs a username (MQTT 3.1.1 section "
        "3.1.2.9)");
  CHECK(ErrorOf(head + "username = \"u\"\npassword = \"pw\"\npassword_file = \"p\"\n") ==
        "site.toml:20: mqtt.password_file: give password or password_file, not both");
  CHECK(ErrorOf(head + "live_interval_seconds = 10\nlive_refresh_seconds = 5\n") ==
        "site.toml:19: mqtt.live_refresh_seconds: expected at least live_interval_seconds "
        "(10), got 5");
  CHECK(ErrorOf(head + "reconnect_first_seconds = 10\nreconnect_max_seconds = 5\n") ==
        "site.toml:19: mqtt.reconnect_max_seconds: expected at least "
        "reconnect_first_seconds (10), got 5");
  CHECK(ErrorOf(head + "retain = true\n") ==
        "site.toml:18: mqtt.retain: unknown key; expected one of enabled, host, port, "
        "client_id, topic_prefix, username, password, password_file, keepalive_seconds, "
        "event_qos, queue_events, live_interval_seconds, live_change_watts, "
        "live_refresh_seconds, reconnect_first_seconds, reconnect_max_seconds");
}

TEST_CASE("a password file that cannot be read names its path, never a password") {
  testing::TempDir dir;
  Result<Config> config =
      ParseConfig(kMinimalConfig + "[mqtt]\nusername = \"u\"\npassword_file = \"none.pass\"\n",
                  dir.File("site.toml"));
  REQUIRE_FALSE(config.ok());
  CHECK(config.status().message() == dir.File("site.toml") +
                                         ":19: mqtt.password_file: cannot read \"" +
                                         dir.File("none.pass") + "\": No such file or directory");
}

TEST_CASE("topic slugs keep lowercase letters and digits") {
  CHECK(TopicSlug("Tannery Street #2") == "tannery-street-2");
  CHECK(TopicSlug("  --Ülm Höhe--  ") == "lm-h-he");
  CHECK(TopicSlug("###") == "site");
  CHECK(CheckTopicPrefix("ampledger/test-house").empty());
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
