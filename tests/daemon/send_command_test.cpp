#include "daemon/send_command.h"

#include <doctest/doctest.h>

#include <sstream>

#include "config/config.h"
#include "daemon/service.h"
#include "test_util.h"

namespace ampledger {
namespace {

constexpr const char* kKeyHex = "a0a1a2a3a4a5a6a7a8a9aaabacadaeafb0b1b2b3b4b5b6b7b8b9babbbcbdbebf";

TEST_SUITE("daemon") {
  TEST_CASE("ampledger send gets an acknowledgement from a running daemon") {
    testing::TempDir dir;
    testing::WriteFile(dir.File("site.toml"), std::string(R"toml(
[site]
name = "Send test"
time_zone = "America/Denver"
nominal_volts = [120, 240]

[[node]]
id = "porch"
key = ")toml") + kKeyHex + R"toml("
[[node.channel]]
id = "ct1"

[[node]]
id = "shed"
auth = "plain"
[[node.channel]]
id = "ct1"

[[circuit]]
id = "porch-heater"
channels = ["porch/ct1"]

[[circuit]]
id = "shed-lights"
channels = ["shed/ct1"]

[storage]
path = "site.db"
[ingest]
listen = "127.0.0.1:0"
[http]
listen = "127.0.0.1:0"
)toml");
    Result<Config> config = LoadConfig(dir.File("site.toml"));
    REQUIRE_MESSAGE(config.ok(), config.status().ToString());
    Service service(*config);
    REQUIRE(service.Start().ok());

    SendOptions options;
    options.to = "127.0.0.1:" + std::to_string(service.udp_port());
    options.config_path = dir.File("site.toml");
    options.node = "porch";
    options.amps = 6.1;
    options.watts = 730;
    std::ostringstream out, err;
    CHECK(RunSend(options, out, err) == 0);
    CHECK(out.str() == "acknowledged: node porch boot 1 seq 1 (cose_mac0)\n");

    SendOptions by_key = options;  // the key given directly, HMAC 256/256
    by_key.config_path.clear();
    by_key.key_hex = kKeyHex;
    by_key.alg = "256/256";
    by_key.seq = 2;
    CHECK(RunSend(by_key, out, err) == 0);

    SendOptions plain = options;  // a plain node opted in to JSON
    plain.node = "shed";
    plain.format = "json";
    CHECK(RunSend(plain, out, err) == 0);

    SendOptions forged = by_key;  // a wrong key is refused by the daemon: no ack
    forged.key_hex = std::string(64, 'f');
    forged.seq = 3;
    forged.wait_ms = 300;
    std::ostringstream forged_err;
    CHECK(RunSend(forged, out, forged_err) == 1);
    CHECK(forged_err.str().find("no acknowledgement") != std::string::npos);

    SendOptions bad_format = options;
    bad_format.format = "xml";
    std::ostringstream bad_err;
    CHECK(RunSend(bad_format, out, bad_err) == 2);
    CHECK(bad_err.str() == "ampledger send: --format: expected cose, cbor or json, got \"xml\"\n");

    service.RequestStop();
    CHECK(service.Wait().ok());
  }
}

}  // namespace
}  // namespace ampledger
