// `ampledger serve` as a real process: start it in a temporary folder, send it datagrams,
// stop it with SIGTERM, and check it exits 0 with every acknowledged reading stored.
#include <doctest/doctest.h>
#include <signal.h>
#include <sys/socket.h>

#include <chrono>

#include "config/wall_clock.h"
#include "daemon/ingest/node_client.h"
#include "process_util.h"
#include "test_util.h"
#include "tests/api/mqtt_test_broker.h"

namespace ampledger {
namespace {

TEST_SUITE("daemon") {
  TEST_CASE("ampledger serve stops on SIGTERM with exit 0 and keeps every acknowledged reading") {
    testing::TempDir dir;
    const int udp_port = testing::FreeLoopbackPort(SOCK_DGRAM);
    const int http_port = testing::FreeLoopbackPort(SOCK_STREAM);
    const std::string key(32, '\x5a');
    testing::WriteFile(dir.File("site.toml"), R"toml(
[site]
name = "Process test"
time_zone = "Europe/Berlin"
nominal_volts = [230]
currency = "EUR"

[[node]]
id = "probe"
key = "5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a"
[[node.channel]]
id = "ct1"

[[circuit]]
id = "kettle"
channels = ["probe/ct1"]

[storage]
path = "site.db"

[ingest]
listen = "127.0.0.1:)toml" + std::to_string(udp_port) + R"toml("

[http]
listen = "127.0.0.1:)toml" + std::to_string(http_port) + R"toml("
)toml");
    pid_t pid = testing::SpawnProcess(
        {testing::AmpledgerBinary(), "serve", "--config", dir.File("site.toml")},
        dir.File("serve.log"));
    REQUIRE(pid > 0);
    REQUIRE_MESSAGE(testing::WaitHealthy(http_port, std::chrono::seconds(10)),
                    testing::ReadFile(dir.File("serve.log")));

    NodeClientOptions options;
    options.node = "probe";
    options.key = key;
    auto client = NodeClient::Open("127.0.0.1:" + std::to_string(udp_port), options);
    REQUIRE(client.ok());
    const UnixMs now = WallClockMs();
    constexpr int kPacks = 200;
    for (int i = 0; i < kPacks; ++i) {
      ChannelSample sample;
      sample.channel = "ct1";
      sample.end_ms = now - (kPacks - i) * 1000;
      sample.duration_ms = 1000;
      sample.amps = 8.7;
      REQUIRE((*client)->Send(NodePack{"probe", 1, static_cast<std::uint32_t>(i + 1), 1000, {sample}})
                  .ok());
    }
    for (int round = 0; round < 100 && (*client)->unacked() > 0; ++round) {
      (*client)->PollAcks(100);
      (*client)->ResendDue(64);
    }
    const std::uint64_t acknowledged = (*client)->acked();
    CHECK(acknowledged == kPacks);

    REQUIRE(::kill(pid, SIGTERM) == 0);
    CHECK(testing::WaitExit(pid, std::chrono::seconds(20)) == 0);
    std::string log = testing::ReadFile(dir.File("serve.log"));
    CHECK(log.find("stopped cleanly") != std::string::npos);
    CHECK(testing::QueryInt(dir.File("site.db"), "SELECT count(*) FROM reading") ==
          static_cast<std::int64_t>(acknowledged));
  }

  TEST_CASE("ampledger serve refuses a bad config with the file, line and key, exit 2") {
    testing::TempDir dir;
    testing::WriteFile(dir.File("bad.toml"), "[site]\nname = \"x\"\ntime_zone = \"Mars/Olympus\"\n");
    pid_t pid = testing::SpawnProcess(
        {testing::AmpledgerBinary(), "serve", "--config", dir.File("bad.toml")},
                      dir.File("serve.log"));
    CHECK(testing::WaitExit(pid, std::chrono::seconds(20)) == 2);
    std::string log = testing::ReadFile(dir.File("serve.log"));
    CHECK(log.find(dir.File("bad.toml") + ":3: site.time_zone:") != std::string::npos);
  }
  TEST_CASE("a killed ampledger serve is reported offline on MQTT by the broker (its will)") {
    testing::TempDir dir;
    testing::MosquittoBroker broker(dir);
    broker.Start();
    const int http_port = testing::FreeLoopbackPort(SOCK_STREAM);
    testing::WriteFile(dir.File("site.toml"), R"toml(
[site]
name = "Will test"
time_zone = "UTC"
nominal_volts = [230]
[[node]]
id = "probe"
auth = "plain"
[[node.channel]]
id = "ct1"
[[circuit]]
id = "kettle"
channels = ["probe/ct1"]
[storage]
path = "site.db"
[ingest]
listen = "127.0.0.1:0"
[http]
listen = "127.0.0.1:)toml" + std::to_string(http_port) + R"toml("
[mqtt]
enabled = true
host = "127.0.0.1"
port = )toml" + std::to_string(broker.port()) + "\n");
    testing::MqttProbe probe(broker.port(), "ampledger/will-test/status");
    pid_t pid = testing::SpawnProcess(
        {testing::AmpledgerBinary(), "serve", "--config", dir.File("site.toml")},
        dir.File("serve.log"));
    REQUIRE(pid > 0);
    REQUIRE_MESSAGE(testing::WaitHealthy(http_port, std::chrono::seconds(10)),
                    testing::ReadFile(dir.File("serve.log")));
    REQUIRE(testing::MqttProbe::WaitFor([&] { return probe.messages().size() == 1; }));
    CHECK(probe.messages()[0].payload.find("\"online\"") != std::string::npos);
    // No goodbye: the kernel closes the socket, and the broker publishes the will at once
    // (MQTT 3.1.1 section 3.1.2.5: the will is published when the network connection is
    // closed without a DISCONNECT).
    ::kill(pid, SIGKILL);
    CHECK(testing::WaitExit(pid, std::chrono::seconds(10)) == -1);
    REQUIRE(testing::MqttProbe::WaitFor([&] { return probe.messages().size() == 2; }));
    CHECK(probe.messages()[1].payload == R"({"reason":"connection lost","state":"offline"})");
    CHECK(testing::ReadFile(dir.File("serve.log")).find("mqtt: connected to 127.0.0.1:") !=
          std::string::npos);
  }
}

}  // namespace
}  // namespace ampledger
