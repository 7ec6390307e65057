// tests/config/config_loader_test.cpp
// LoadConfig and ParseConfig: files on disk, the example site, relative paths, key files.
#include <doctest/doctest.h>

#include <filesystem>

#include "config/config.h"
#include "tests/config/config_text.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

using testing::kMinimalConfig;
using testing::kTestKeyHex;
using testing::SourceDir;
using testing::TempDir;
using testing::WriteFile;

std::vector<std::uint8_t> TestKeyBytes() {
  std::vector<std::uint8_t> key;
  for (int i = 0; i < 32; ++i) key.push_back(static_cast<std::uint8_t>(i));
  return key;
}

TEST_SUITE("config") {

TEST_CASE("the minimal config gets the documented defaults") {
  Result<Config> config = ParseConfig(kMinimalConfig, "/srv/ampledger/site.toml");
  REQUIRE(config.ok());
  CHECK(config->source_path == "/srv/ampledger/site.toml");
  CHECK(config->site.name == "Test house");
  CHECK(config->site.currency == "USD");
  CHECK(config->site.billing_cycle_day == 1);
  CHECK(config->site.tariff.empty());
  REQUIRE(config->nodes.size() == 1);
  CHECK(config->nodes[0].auth == AuthMode::kCoseMac0);
  CHECK(config->nodes[0].key == TestKeyBytes());
  CHECK(config->nodes[0].channels[1].gain == 1.0);
  REQUIRE(config->circuits.size() == 1);
  CHECK(config->circuits[0].name == "c1");               // defaults to the id
  CHECK(config->circuits[0].nominal_volts == 230);       // the site's first voltage
  CHECK(config->circuits[0].direction == Direction::kConsumption);
  CHECK(!config->remainder);
  CHECK(config->storage.path == "/srv/ampledger/ampledger.db");
  CHECK(config->storage.synchronous == SyncMode::kFull);
  CHECK(config->ingest.listen == "0.0.0.0:4717");
  CHECK(config->http.listen == "127.0.0.1:8417");
  CHECK(config->http.tls_certificate.empty());
  CHECK(config->log.level == "info");
}

TEST_CASE("relative paths are resolved against the config file's folder") {
  const std::string text = kMinimalConfig +
                           "[storage]\npath = \"data/../db/site.db\"\n"
                           "[http]\ntls_certificate = \"tls/cert.pem\"\n"
                           "tls_private_key = \"/etc/ampledger/key.pem\"\n";
  Result<Config> config = ParseConfig(text, "/srv/ampledger/site.toml");
  REQUIRE(config.ok());
  CHECK(config->storage.path == "/srv/ampledger/db/site.db");
  CHECK(config->http.tls_certificate == "/srv/ampledger/tls/cert.pem");
  CHECK(config->http.tls_private_key == "/etc/ampledger/key.pem");

  // A relative source name means the current directory.
  Result<Config> here = ParseConfig(kMinimalConfig, "site.toml");
  REQUIRE(here.ok());
  CHECK(here->storage.path == (std::filesystem::current_path() / "ampledger.db").string());
}

TEST_CASE("LoadConfig reads a file and names it in messages") {
  TempDir dir;
  WriteFile(dir.File("site.toml"), kMinimalConfig + "[log]\nlevel = 3\n");
  Result<Config> config = LoadConfig(dir.File("site.toml"));
  REQUIRE(!config.ok());
  CHECK(config.status().code() == StatusCode::kInvalidArgument);
  CHECK(config.status().message() ==
        dir.File("site.toml") + ":18: log.level: expected a string, got an integer");

  Result<Config> missing = LoadConfig(dir.File("absent.toml"));
  REQUIRE(!missing.ok());
  CHECK(missing.status().code() == StatusCode::kIOError);
  CHECK(missing.status().message() ==
        "cannot read \"" + dir.File("absent.toml") + "\": No such file or directory");
}

// Found by tests/fuzz/config_run.sh (the same input broke a debug build of toml++'s parser).
TEST_CASE("a control character where a key begins is a TOML syntax error, at its line") {
  CHECK(testing::ErrorOf(kMinimalConfig + "[\x01node]\n") ==
        "site.toml:17: TOML syntax: Error while parsing key: expected bare key starting "
        "character or string delimiter, saw '\\u0001' (column 2)");
}

TEST_CASE("key_file: relative to the config's folder, 64 hex digits, whitespace ignored") {
  TempDir dir;
  std::filesystem::create_directory(dir.path() / "keys");
  const std::string node = "[[node]]\nid = \"n2\"\nkey_file = \"keys/n2.key\"\n"  // 17-19
                           "[[node.channel]]\nid = \"ct1\"\n";
  WriteFile(dir.File("site.toml"), kMinimalConfig + node);

  WriteFile(dir.File("keys/n2.key"), "  " + kTestKeyHex.substr(0, 30) + "\n" +
                                         kTestKeyHex.substr(30) + "\n\n");
  Result<Config> config = LoadConfig(dir.File("site.toml"));
  REQUIRE(config.ok());
  CHECK(config->nodes[1].key == TestKeyBytes());

  WriteFile(dir.File("keys/n2.key"), kTestKeyHex.substr(0, 63));
  config = LoadConfig(dir.File("site.toml"));
  REQUIRE(!config.ok());
  CHECK(config.status().message() ==
        dir.File("site.toml") + ":19: node[1].key_file: \"" + dir.File("keys/n2.key") +
            "\": expected 64 hex digits (a 32-byte key), got 63");
  // The part of the key that was there is not repeated in the message.
  CHECK(config.status().message().find(kTestKeyHex.substr(0, 16)) == std::string::npos);

  std::filesystem::remove(dir.path() / "keys/n2.key");
  config = LoadConfig(dir.File("site.toml"));
  REQUIRE(!config.ok());
  CHECK(config.status().message() ==
        dir.File("site.toml") + ":19: node[1].key_file: cannot read \"" +
            dir.File("keys/n2.key") + "\": No such file or directory");
}

TEST_CASE("the example site loads") {
  const std::filesystem::path folder = SourceDir() / "config" / "examples";
  Result<Config> config = LoadConfig((folder / "duplex.toml").string());
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  CHECK(config->site.time_zone == "America/Chicago");
  CHECK(config->site.nominal_volts == std::vector<double>{120, 240});
  CHECK(config->site.billing_cycle_day == 5);
  CHECK(config->nodes.size() == 3);
  CHECK(config->nodes[1].key.size() == 32);  // from keys/lower-panel.key
  CHECK(config->nodes[2].auth == AuthMode::kPlain);
  CHECK(config->units.size() == 2);
  CHECK(config->shared.size() == 3);
  REQUIRE(config->remainder);
  CHECK(config->storage.path == (folder / "duplex.db").string());
  // The demo tariff, from the source tree's library through tariff_dir = "../tariffs".
  CHECK(config->site.tariff == "tannery-street-time-of-use");
  CHECK(config->site.tariff_dir == (SourceDir() / "config" / "tariffs").lexically_normal().string());
  REQUIRE(config->tariffs.size() == 1);
  CHECK(config->tariffs[0].tariff.rates.name == "Tannery Street residential time-of-use (demo)");
  const CircuitConfig* solar = config->FindCircuit("solar");
  REQUIRE(solar != nullptr);
  CHECK(solar->direction == Direction::kExport);
  CHECK(solar->nominal_volts == 240);
  const CircuitConfig* kitchen = config->FindCircuit("upper-kitchen");
  REQUIRE(kitchen != nullptr);
  CHECK(kitchen->nominal_volts == 120);
  const AlertRuleConfig& dryer = config->alerts[0];
  CHECK(dryer.kind == AlertKind::kCycleDone);
  CHECK(dryer.clear_watts == 60);
  const AlertRuleConfig& heater = config->alerts[1];
  CHECK(heater.clear_watts == 1500);
  CHECK(config->alerts[2].nodes.empty());  // node_silent on every node
  CHECK(config->alerts[2].missed_intervals == 5);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
