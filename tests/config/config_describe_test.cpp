// tests/config/config_describe_test.cpp
// DescribeConfig: what `ampledger check` prints. Keys never appear.
#include <doctest/doctest.h>

#include <algorithm>
#include <cctype>
#include <filesystem>

#include "config/config.h"
#include "tests/config/config_text.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

using testing::kMinimalConfig;
using testing::kTestKeyHex;
using testing::ReadFile;
using testing::SourceDir;

std::string Upper(std::string text) {
  std::transform(text.begin(), text.end(), text.begin(),
                 [](unsigned char c) { return static_cast<char>(std::toupper(c)); });
  return text;
}

TEST_SUITE("config") {

TEST_CASE("the summary of the minimal config, whole") {
  Result<Config> config = ParseConfig(kMinimalConfig, "/srv/ampledger/site.toml");
  REQUIRE(config.ok());
  CHECK(DescribeConfig(*config) ==
        "site \"Test house\": Europe/Paris, 230 V, USD, billing cycle starts on day 1, "
        "tariff none\n"
        "nodes (1):\n"
        "  n1: 2 channels, auth cose, key set\n"
        "circuits (1):\n"
        "  c1: n1/ct1, 230 V, consumption\n"
        "units (0):\n"
        "shared circuits (0):\n"
        "remainder: not split among units\n"
        "alert rules (0):\n"
        "storage: /srv/ampledger/ampledger.db (synchronous full, raw readings kept 400 days)\n"
        "nodes report to UDP 0.0.0.0:4717\n"
        "HTTP API on 127.0.0.1:8417\n"
        "log level: info\n");
  CHECK(DescribeConfig(*config).find(kTestKeyHex) == std::string::npos);
}

TEST_CASE("the MQTT broker in the summary, without its password") {
  Result<Config> config = ParseConfig(kMinimalConfig +
                                          "[mqtt]\nenabled = true\nhost = \"broker.lan\"\n"
                                          "username = \"meter\"\npassword = \"hunter2-long\"\n",
                                      "/srv/ampledger/site.toml");
  REQUIRE(config.ok());
  const std::string summary = DescribeConfig(*config);
  CHECK(summary.find("HTTP API on 127.0.0.1:8417\n"
                     "MQTT: broker broker.lan port 1883, topics under ampledger/test-house/\n"
                     "log level: info\n") != std::string::npos);
  CHECK(summary.find("hunter2-long") == std::string::npos);
}

TEST_CASE("the tariffs in the summary, with their dated changes") {
  testing::TempDir dir;
  std::filesystem::create_directories(dir.path() / "rates");
  const std::string flat =
      "name = \"Flat test rate\"\n[[season]]\nname = \"all\"\nfrom = \"01-01\"\n"
      "to = \"12-31\"\ndefault_period = \"any\"\n[[season.period]]\nname = \"any\"\n"
      "price = 0.2\n";
  testing::WriteFile(dir.path() / "rates" / "flat.toml", flat);
  testing::WriteFile(dir.path() / "rates" / "flat-2027.toml", flat);
  const std::string site = kMinimalConfig.substr(0, kMinimalConfig.find("\n\n") + 1) +
                           "tariff_dir = \"rates\"\ntariff = \"flat\"\n"
                           "[[site.tariff_change]]\nfrom = 2027-01-01\ntariff = \"flat-2027\"\n" +
                           kMinimalConfig.substr(kMinimalConfig.find("\n\n") + 1);
  testing::WriteFile(dir.path() / "site.toml", site);
  Result<Config> config = LoadConfig(dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  CHECK(DescribeConfig(*config).find(
            "tariff flat\n"
            "tariffs (from " + dir.File("rates") + "):\n"
            "  flat \"Flat test rate\"\n"
            "  from 2027-01-01: flat-2027 \"Flat test rate\"\n"
            "nodes (1):\n") != std::string::npos);
}

TEST_CASE("alert rules in the summary") {
  // A cost budget needs the site's tariff.
  testing::TempDir dir;
  std::filesystem::create_directories(dir.path() / "tariffs");
  testing::WriteFile(dir.path() / "tariffs" / "flat.toml",
                     "name = \"Flat\"\n[[season]]\nname = \"all\"\nfrom = \"01-01\"\n"
                     "to = \"12-31\"\ndefault_period = \"any\"\n[[season.period]]\n"
                     "name = \"any\"\nprice = 0.2\n");
  const std::string text = kMinimalConfig.substr(0, kMinimalConfig.find("\n\n") + 1) +
                           "tariff = \"flat\"\n" +
                           kMinimalConfig.substr(kMinimalConfig.find("\n\n") + 1) +
                           "[[alert]]\nid = \"spend\"\nkind = \"budget\"\ncircuits = [\"c1\"]\n"
                           "budget_cost = 2.5\nbudget_period = \"week\"\n"
                           "[[alert]]\nid = \"idle\"\nkind = \"power_below\"\ncircuits = [\"c1\"]\n"
                           "level_watts = 20\n";
  Result<Config> config = ParseConfig(text, dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  const std::string summary = DescribeConfig(*config);
  CHECK(summary.find("alert rules (2):\n"
                     "  spend: budget on circuit c1, 2.5 USD per week\n"
                     "  idle: power_below on circuit c1, level 20 W\n") != std::string::npos);
}

TEST_CASE("the example's summary names its circuits, units, splits and rules") {
  const std::filesystem::path folder = SourceDir() / "config" / "examples";
  Result<Config> config = LoadConfig((folder / "duplex.toml").string());
  REQUIRE(config.ok());
  const std::string summary = DescribeConfig(*config);
  for (const CircuitConfig& circuit : config->circuits) {
    CHECK_MESSAGE(summary.find("  " + circuit.id + " \"" + circuit.name + "\": ") !=
                      std::string::npos,
                  circuit.id);
  }
  CHECK(summary.find("site \"Tannery Street duplex\": America/Chicago, 120/240 V, USD, billing "
                     "cycle starts on day 5") != std::string::npos);
  CHECK(summary.find("  upper-panel: 6 channels, auth cose, key set\n") != std::string::npos);
  CHECK(summary.find("  roof-box: 4 channels, auth plain, no key\n") != std::string::npos);
  CHECK(summary.find("\"Upper flat heat-pump water heater\": upper-panel/ct4, upper-panel/ct5, "
                     "240 V, consumption\n") != std::string::npos);
  CHECK(summary.find("\"Rooftop solar\": roof-box/ct1, roof-box/ct2, 240 V (voltage from "
                     "roof-box/ct1), export\n") != std::string::npos);
  CHECK(summary.find("  hall-lights: fixed: upper 54.4%, lower 45.6%\n") != std::string::npos);
  CHECK(summary.find("  laundry-dryer: proportional among all units\n") != std::string::npos);
  CHECK(summary.find("remainder: equal among all units\n") != std::string::npos);
  CHECK(summary.find("  dryer-finished: cycle_done on circuit laundry-dryer, level 400 W\n") !=
        std::string::npos);
  CHECK(summary.find("  node-quiet: node_silent on every node, after 5 missed intervals\n") !=
        std::string::npos);
  CHECK(summary.find("  upper-daily-spend: budget on unit upper, 2.25 USD per day\n") !=
        std::string::npos);

  // Neither key, in either case, appears.
  const std::string upper_key = "5a41ba0afa7e11512f513e2edd92f301e904a95ed5a3bc5849eca18a89819580";
  std::string file_key = ReadFile(folder / "keys" / "lower-panel.key");
  file_key.erase(std::remove_if(file_key.begin(), file_key.end(),
                                [](unsigned char c) { return std::isspace(c); }),
                 file_key.end());
  for (const std::string& key : {upper_key, file_key}) {
    CHECK(summary.find(key.substr(0, 16)) == std::string::npos);
    CHECK(summary.find(Upper(key).substr(0, 16)) == std::string::npos);
  }
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
