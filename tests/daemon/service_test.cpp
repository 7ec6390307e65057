// End to end through the real daemon: UDP on 127.0.0.1, COSE_Mac0, the writer, a real SQLite
// file, acknowledgements, and the HTTP API.
#include "daemon/service.h"

#include <doctest/doctest.h>
#include <httplib.h>

#include <chrono>
#include <future>
#include <cmath>
#include <nlohmann/json.hpp>
#include <thread>

#include "config/wall_clock.h"
#include "daemon/ingest/node_client.h"
#include "daemon/ingest/udp_receiver.h"
#include "test_util.h"
#include "tests/api/mqtt_test_broker.h"

namespace ampledger {
namespace {

constexpr const char* kBenchKeyHex =
    "00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff";

std::string BenchKey() {
  std::string key;
  for (int i = 0; i < 32; ++i) {
    key.push_back(static_cast<char>(std::stoi(std::string(kBenchKeyHex + 2 * i, 2), nullptr, 16)));
  }
  return key;
}

Config BenchConfig(const testing::TempDir& dir) {
  std::string toml = std::string(R"toml(
[site]
name = "Test bench"
time_zone = "UTC"
nominal_volts = [230]
currency = "EUR"

[[node]]
id = "bench"
key = ")toml") + kBenchKeyHex + R"toml("
[[node.channel]]
id = "ct1"

[[circuit]]
id = "heater"
channels = ["bench/ct1"]

[storage]
path = "bench.db"

[ingest]
listen = "127.0.0.1:0"

[http]
listen = "127.0.0.1:0"
threads = 2
)toml";
  Result<Config> config = ParseConfig(toml, dir.File("bench.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  return *config;
}

// One 10-second interval of a steady load: the register grows by exactly watts x 10 s.
NodePack HeaterPack(std::uint32_t boot, std::uint32_t seq, UnixMs end_ms, double watts,
                    double register_j) {
  ChannelSample sample;
  sample.channel = "ct1";
  sample.end_ms = end_ms;
  sample.duration_ms = 10000;
  sample.amps = watts / 230.0;
  sample.real_watts = watts;
  sample.real_register_j = register_j;
  return NodePack{"bench", boot, seq, 10000, {sample}};
}

// Waits (bounded) until every pack sent through `client` is acknowledged, resending.
void DrainAcks(NodeClient& client) {
  for (int round = 0; round < 300 && client.unacked() > 0; ++round) {
    client.PollAcks(100);
    client.ResendDue(256);
  }
}

TEST_SUITE("daemon") {
  TEST_CASE("kWh survive lost datagrams, resends, duplicates and a node reboot") {
    testing::TempDir dir;
    Config config = BenchConfig(dir);
    const std::string db_path = config.storage.path;
    Service service(config);
    REQUIRE(service.Start().ok());

    NodeClientOptions options;
    options.node = "bench";
    options.key = BenchKey();
    // Resend soon: a resend must arrive while its seq is still inside the daemon's
    // anti-replay window (ReplayWindow::kWindowSize datagrams behind the newest).
    options.resend_after_ms = 20;
    auto client = NodeClient::Open("127.0.0.1:" + std::to_string(service.udp_port()), options);
    REQUIRE(client.ok());

    // 3000 intervals of 10 s ending now; every tenth datagram is lost on its first send and
    // resent later; the node reboots halfway (boot 2, seq and register start again from zero)
    // with losses of boot 1 still unacknowledged, and resends them after its first boot-2
    // packs are stored (as a node keeping unacknowledged packs in flash would).
    constexpr int kPacks = 3000;
    const UnixMs first_end = WallClockMs() - kPacks * 10000;
    double truth_wh = 0;
    double register_j = 0;
    std::uint32_t boot = 1, seq = 0;
    for (int i = 0; i < kPacks; ++i) {
      if (i == kPacks / 2) {
        REQUIRE((*client)->unacked() > 0);  // at least boot 1's last pack
        boot = 2;
        seq = 0;
        register_j = 0;
      }
      double watts = 500 + 1500 * ((i / 37) % 2) + (i % 7);  // a thermostat cycling
      register_j += watts * 10;
      truth_wh += watts * 10 / 3600;
      NodePack pack = HeaterPack(boot, ++seq, first_end + (i + 1) * 10000, watts, register_j);
      const bool last_of_boot_1 = i == kPacks / 2 - 1;
      const bool lose = i % 10 == 3 || last_of_boot_1;
      while (!(*client)->Send(pack, lose).ok()) (*client)->PollAcks(100);
      if (i == kPacks / 2) {
        // Boot 2's first pack is stored before boot 1's losses come again.
        const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(1);
        while (std::chrono::steady_clock::now() < until) (*client)->PollAcks(50);
      }
      (*client)->PollAcks(0);
      if (!last_of_boot_1) (*client)->ResendDue(8);
    }
    DrainAcks(**client);
    REQUIRE((*client)->unacked() == 0);
    CHECK((*client)->acked() == kPacks);

    // A duplicate of a stored datagram is acknowledged again and changes nothing.
    const std::uint32_t stored_seq = kPacks / 2 - 10;  // boot 2, inside the replay window
    REQUIRE((*client)
                ->Send(HeaterPack(2, stored_seq, first_end + (kPacks / 2 + stored_seq) * 10000,
                                  9999, 1))
                .ok());
    DrainAcks(**client);
    CHECK((*client)->unacked() == 0);

    // Forged (wrong key), replayed (a seq far left of boot 2's window) and garbage
    // datagrams: counted, no ack.
    NodeClientOptions forger = options;
    forger.key = std::string(32, 'x');
    auto forged = NodeClient::Open("127.0.0.1:" + std::to_string(service.udp_port()), forger);
    REQUIRE((*forged)->Send(HeaterPack(2, 99999, WallClockMs(), 5000, 1e9)).ok());
    auto replayer = NodeClient::Open("127.0.0.1:" + std::to_string(service.udp_port()), options);
    REQUIRE((*replayer)->Send(HeaterPack(2, 5, first_end + 50000, 5000, 1e9)).ok());
    CHECK((*forged)->PollAcks(300) == 0);
    CHECK((*replayer)->PollAcks(300) == 0);
    httplib::Client api("127.0.0.1", service.http_port());
    api.set_bearer_token_auth(testing::ViewerToken(config));
    {
      int garbage = ::socket(AF_INET, SOCK_DGRAM, 0);
      PeerAddress to = ResolveAddress("127.0.0.1:" + std::to_string(service.udp_port())).value();
      for (const std::string bytes : {"not senml", "[{\"bn\":", "\xa1\x01", ""}) {
        ::sendto(garbage, bytes.data(), bytes.size(), 0,
                 reinterpret_cast<const sockaddr*>(&to.address), to.length);
      }
      ::close(garbage);
    }
    nlohmann::json nodes;
    for (int attempt = 0; attempt < 50; ++attempt) {
      auto answer = api.Get("/v1/nodes");
      REQUIRE(answer);
      nodes = nlohmann::json::parse(answer->body);
      if (nodes["datagrams"]["refused"]["malformed"].get<int>() >= 4) break;
      std::this_thread::sleep_for(std::chrono::milliseconds(50));
    }
    CHECK(nodes["datagrams"]["refused"]["bad_tag"] == 1);
    CHECK(nodes["datagrams"]["refused"]["replay"] == 1);
    CHECK(nodes["datagrams"]["refused"]["malformed"].get<int>() >= 3);
    CHECK(nodes["datagrams"]["duplicates"].get<int>() >= 1);
    CHECK(nodes["datagrams"]["stored"] == kPacks);
    CHECK(nodes["readings_stored"] == kPacks);
    CHECK(nodes["nodes"][0]["boot"] == 2);

    service.RequestStop();
    REQUIRE(service.Wait().ok());

    CHECK(testing::QueryDouble(db_path, "SELECT count(*) FROM reading") == kPacks);
    double stored_wh = testing::QueryDouble(db_path, "SELECT sum(real_wh) FROM rollup");
    CHECK(stored_wh == doctest::Approx(truth_wh).epsilon(1e-9));
  }

  TEST_CASE("alerts: readings over UDP raise an alert a long-poll receives; it survives a restart") {
    testing::TempDir dir;
    Config config = BenchConfig(dir);
    AlertRuleConfig& rule = config.alerts.emplace_back();
    rule.id = "heater-high";
    rule.kind = AlertKind::kPowerAbove;
    rule.circuits = {"heater"};
    rule.level_watts = 1000;
    rule.clear_watts = 500;
    rule.hold_seconds = 20;
    NodeClientOptions options;
    options.node = "bench";
    options.key = BenchKey();
    options.resend_after_ms = 20;
    const UnixMs end = WallClockMs();
    const std::string token = [&] {
      Service service(config);  // migrates the database the token goes into
      REQUIRE(service.Start().ok());
      std::string issued = testing::ViewerToken(config);
      httplib::Client api("127.0.0.1", service.http_port());
      api.set_bearer_token_auth(issued);
      api.set_read_timeout(40);
      auto waiter = std::async(std::launch::async, [&] {
        return api.Get("/v1/events?after=0&wait=30");
      });
      auto client = NodeClient::Open("127.0.0.1:" + std::to_string(service.udp_port()), options);
      REQUIRE(client.ok());
      for (std::uint32_t seq = 1; seq <= 3; ++seq) {  // 2 kW from end - 30 s to end
        REQUIRE((*client)->Send(HeaterPack(1, seq, end - (3 - seq) * 10000, 2000, seq * 2e4))
                    .ok());
      }
      DrainAcks(**client);
      httplib::Result answer = waiter.get();
      REQUIRE(answer);
      REQUIRE(answer->status == 200);
      nlohmann::json events = nlohmann::json::parse(answer->body)["events"];
      REQUIRE(events.size() == 1);
      CHECK(events[0]["kind"] == "raised");
      CHECK(events[0]["rule"] == "heater-high");
      // The first interval began at end - 30 s; the second, ending at end - 10 s, meets the hold.
      CHECK(events[0]["values"]["held_s"] == 20);
      return issued;
    }();
    Service service(config);
    REQUIRE(service.Start().ok());
    httplib::Client api("127.0.0.1", service.http_port());
    api.set_bearer_token_auth(token);
    httplib::Result active = api.Get("/v1/alerts");
    REQUIRE(active);
    CHECK(nlohmann::json::parse(active->body)["alerts"].size() == 1);
    auto client = NodeClient::Open("127.0.0.1:" + std::to_string(service.udp_port()), options);
    REQUIRE(client.ok());
    REQUIRE((*client)->Send(HeaterPack(1, 4, end + 10000, 100, 6.1e4)).ok());
    DrainAcks(**client);
    httplib::Result events = api.Get("/v1/events?after=1&wait=10");
    REQUIRE(events);
    nlohmann::json cleared = nlohmann::json::parse(events->body)["events"];
    REQUIRE(cleared.size() == 1);
    CHECK(cleared[0]["kind"] == "cleared");
    CHECK(nlohmann::json::parse(api.Get("/v1/alerts")->body)["alerts"].empty());
  }
  TEST_CASE("mqtt: readings over UDP reach a subscriber of the broker; counters in /metrics") {
    testing::TempDir dir;
    testing::MosquittoBroker broker(dir);
    broker.Start();
    Config config = BenchConfig(dir);
    config.mqtt.enabled = true;
    config.mqtt.host = "127.0.0.1";
    config.mqtt.port = broker.port();
    config.mqtt.live_interval_seconds = 1;
    AlertRuleConfig& rule = config.alerts.emplace_back();
    rule.id = "heater-high";
    rule.kind = AlertKind::kPowerAbove;
    rule.circuits = {"heater"};
    rule.level_watts = 1000;
    rule.clear_watts = 500;
    const std::string prefix = "ampledger/test-bench";  // from the site name "Test bench"
    REQUIRE(config.mqtt.topic_prefix == prefix);
    testing::MqttProbe probe(broker.port(), prefix + "/#");
    {
      Service service(config);
      REQUIRE(service.Start().ok());
      NodeClientOptions options;
      options.node = "bench";
      options.key = BenchKey();
      options.resend_after_ms = 20;
      auto client = NodeClient::Open("127.0.0.1:" + std::to_string(service.udp_port()), options);
      REQUIRE(client.ok());
      const UnixMs end = WallClockMs();
      for (std::uint32_t seq = 1; seq <= 3; ++seq) {
        REQUIRE((*client)->Send(HeaterPack(1, seq, end - (3 - seq) * 10000, 2000, seq * 2e4))
                    .ok());
      }
      DrainAcks(**client);
      const std::string live_topic = prefix + "/circuit/heater/power";
      REQUIRE(testing::MqttProbe::WaitFor([&] {
        return !probe.On(live_topic).empty() &&
               nlohmann::json::parse(probe.On(live_topic).back().payload)["reading_end_ms"] ==
                   end;
      }));
      nlohmann::json live = nlohmann::json::parse(probe.On(live_topic).back().payload);
      CHECK(live["watts"] == 2000.0);
      CHECK(live["reading_end"].get<std::string>().ends_with("Z"));  // the site's zone is UTC
      const std::string raised = prefix + "/event/raised/circuit/heater";
      REQUIRE(testing::MqttProbe::WaitFor([&] { return probe.On(raised).size() == 1; }));
      CHECK(nlohmann::json::parse(probe.On(raised)[0].payload)["rule"] == "heater-high");

      httplib::Client api("127.0.0.1", service.http_port());
      api.set_bearer_token_auth(testing::ViewerToken(config));
      httplib::Result metrics = api.Get("/metrics");
      REQUIRE(metrics);
      CHECK(metrics->body.find("\nampledger_mqtt_connected 1\n") != std::string::npos);
      CHECK(metrics->body.find("\nampledger_mqtt_connects_total 1\n") != std::string::npos);
      service.RequestStop();
      REQUIRE(service.Wait().ok());
    }
    // A clean stop says so on the status topic (retained), after the "online" of the start.
    REQUIRE(testing::MqttProbe::WaitFor([&] { return probe.On(prefix + "/status").size() == 2; }));
    CHECK(nlohmann::json::parse(probe.On(prefix + "/status")[0].payload)["state"] == "online");
    CHECK(nlohmann::json::parse(probe.On(prefix + "/status")[1].payload)["state"] == "offline");
  }
}

}  // namespace
}  // namespace ampledger
