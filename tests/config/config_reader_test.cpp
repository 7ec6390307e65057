// tests/config/config_reader_test.cpp
// Errors found while reading each table: the whole message is compared, so the format
// "<file>:<line>: <key path>: <what>" is pinned down here.
#include "config/config_reader.h"

#include <doctest/doctest.h>

#include <filesystem>

#include "tests/config/config_text.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

using testing::ErrorOf;
using testing::kMinimalConfig;
using testing::kTestKeyHex;

TEST_SUITE("config") {

TEST_CASE("the minimal config loads") {
  CHECK(ErrorOf(kMinimalConfig) == "OK");
}

TEST_CASE("TOML syntax errors give the line and column") {
  CHECK(ErrorOf("[site]\nname = \"Test house\n") ==
        "site.toml:2: TOML syntax: Error while parsing string: unescaped control characters "
        "other than TAB (U+0009) are explicitly prohibited (column 19)");
  CHECK(ErrorOf(kMinimalConfig + "id = \"again\"\n") ==
        "site.toml:17: TOML syntax: Error while parsing key-value pair: cannot redefine "
        "existing string 'id' (column 6)");
  CHECK(ErrorOf(kMinimalConfig + "[site]\n") ==
        "site.toml:17: TOML syntax: Error while parsing table header: cannot redefine existing "
        "table 'site' (column 1)");
}

TEST_CASE("unknown keys are errors, with the keys that were expected") {
  CHECK(ErrorOf(kMinimalConfig + "[sites]\n") ==
        "site.toml:17: sites: unknown key; expected one of site, node, circuit, unit, shared, "
        "remainder, alert, webhook, storage, ingest, http, log, mqtt");
  CHECK(ErrorOf("[site]\nname = \"x\"\ntimezone = \"Europe/Paris\"\n") ==
        "site.toml:3: site.timezone: unknown key; expected one of name, time_zone, "
        "nominal_volts, currency, tariff_dir, tariff, tariff_change, billing_cycle_day, "
        "max_gap_seconds");
  CHECK(ErrorOf(kMinimalConfig + "calibration = 2\n") ==
        "site.toml:17: circuit[0].calibration: unknown key; expected one of id, name, channels, "
        "nominal_volts, voltage_from, one_leg_of_split_phase, direction, "
        "assumed_power_factor, breaker_amps");
}

TEST_CASE("missing keys are reported at the line of the table that lacks them") {
  CHECK(ErrorOf("") == "site.toml: site: missing; expected a table ([site])");
  CHECK(ErrorOf("[site]\nname = \"x\"\nnominal_volts = [230]\n") ==
        "site.toml:1: site.time_zone: missing; expected a string");
  CHECK(ErrorOf("[site]\nname = \"x\"\ntime_zone = \"UTC\"\n") ==
        "site.toml:1: site.nominal_volts: missing; expected an array of numbers, each a number "
        "from 50 to 500");
  CHECK(ErrorOf("[site]\nname = \"x\"\ntime_zone = \"UTC\"\nnominal_volts = [230]\n") ==
        "site.toml: node: missing; expected an array of tables ([[node]])");
  CHECK(ErrorOf(kMinimalConfig + "[[circuit]]\nname = \"No id\"\n") ==
        "site.toml:17: circuit[1].id: missing; expected a string");
  CHECK(ErrorOf(kMinimalConfig + "[[circuit]]\nid = \"c2\"\n") ==
        "site.toml:17: circuit[1].channels: missing; expected an array of strings");
}

TEST_CASE("wrong types name what was expected and what was found") {
  CHECK(ErrorOf("[[site]]\nname = \"x\"\n") ==
        "site.toml:1: site: expected a table ([site]), got an array");
  CHECK(ErrorOf("[site]\nname = 7\n") ==
        "site.toml:2: site.name: expected a string, got an integer");
  CHECK(ErrorOf("[site]\nname = \"x\"\ntime_zone = \"UTC\"\nnominal_volts = [\"230\"]\n") ==
        "site.toml:4: site.nominal_volts[0]: expected a number from 50 to 500, got a string");
  CHECK(ErrorOf("[site]\nname = \"x\"\ntime_zone = \"UTC\"\nnominal_volts = [230]\n"
                "billing_cycle_day = 5.0\n") ==
        "site.toml:5: site.billing_cycle_day: expected an integer from 1 to 28, got a "
        "floating-point number");
  CHECK(ErrorOf("[site]\nname = \"x\"\ntime_zone = \"UTC\"\nnominal_volts = [230]\n"
                "[node]\nid = \"n1\"\n") ==
        "site.toml:5: node: expected an array of tables ([[node]]), got a table");
  CHECK(ErrorOf(kMinimalConfig + "one_leg_of_split_phase = \"yes\"\n") ==
        "site.toml:17: circuit[0].one_leg_of_split_phase: expected true or false, got a string");
}

TEST_CASE("values out of range are refused, not clamped") {
  const std::string site = "[site]\nname = \"x\"\ntime_zone = \"UTC\"\n";
  CHECK(ErrorOf(site + "nominal_volts = [230]\nbilling_cycle_day = 31\n") ==
        "site.toml:5: site.billing_cycle_day: expected an integer from 1 to 28, got 31");
  CHECK(ErrorOf(site + "nominal_volts = [12]\n") ==
        "site.toml:4: site.nominal_volts[0]: expected a number from 50 to 500, got 12");
  CHECK(ErrorOf(site + "nominal_volts = []\n") ==
        "site.toml:4: site.nominal_volts: expected 1 to 4 voltages, got 0");
  CHECK(ErrorOf(site + "nominal_volts = [230]\nmax_gap_seconds = nan\n") ==
        "site.toml:5: site.max_gap_seconds: expected a number from 1 to 86400, got nan");
  CHECK(ErrorOf(kMinimalConfig + "assumed_power_factor = 1.2\n") ==
        "site.toml:17: circuit[0].assumed_power_factor: expected a number from 0.1 to 1, got 1.2");
  CHECK(ErrorOf(kMinimalConfig + "[[node]]\nid = \"n2\"\nauth = \"plain\"\n"
                                 "[[node.channel]]\nid = \"ct1\"\ngain = 3\n") ==
        "site.toml:22: node[1].channel[0].gain: expected a number from 0.5 to 2, got 3");
  CHECK(ErrorOf(kMinimalConfig + "[storage]\nmin_free_bytes = -1\n") ==
        "site.toml:18: storage.min_free_bytes: expected an integer from 0 to 1125899906842624, "
        "got -1");
}

TEST_CASE("site values: time zone from the IANA database, currency code, tariff name") {
  // Source of the zone names: the IANA tz database installed on the machine.
  const std::string head = "[site]\nname = \"x\"\nnominal_volts = [230]\n";
  CHECK(ErrorOf(head + "time_zone = \"America/Chicgo\"\n") ==
        "site.toml:4: site.time_zone: expected an IANA time zone name such as "
        "\"America/Chicago\", got \"America/Chicgo\", which is not in the time zone database");
  CHECK(ErrorOf(head + "time_zone = \"UTC\"\ncurrency = \"usd\"\n") ==
        "site.toml:5: site.currency: expected an ISO 4217 code of three capital letters, got "
        "\"usd\"");
  CHECK(ErrorOf(head + "time_zone = \"UTC\"\ntariff = \"my tariff\"\n") ==
        "site.toml:5: site.tariff: expected a tariff name of 1 to 64 letters, digits, '.', '_' "
        "or '-', got \"my tariff\"");
}

TEST_CASE("ids are short plain names") {
  CHECK(ErrorOf(kMinimalConfig + "[[unit]]\nid = \"" + std::string(64, 'u') + "\"\n") == "OK");
  CHECK(ErrorOf(kMinimalConfig + "[[unit]]\nid = \"" + std::string(65, 'u') + "\"\n") ==
        "site.toml:18: unit[0].id: expected an id of 1 to 64 letters, digits, '.', '_' or '-', "
        "got \"" + std::string(65, 'u') + "\"");
  CHECK(ErrorOf(kMinimalConfig + "[[unit]]\nid = \"a/b\"\n") ==
        "site.toml:18: unit[0].id: expected an id of 1 to 64 letters, digits, '.', '_' or '-', "
        "got \"a/b\"");
  CHECK(ErrorOf(kMinimalConfig + "[[unit]]\nid = \"flat 1\"\n") ==
        "site.toml:18: unit[0].id: expected an id of 1 to 64 letters, digits, '.', '_' or '-', "
        "got \"flat 1\"");
  CHECK(ErrorOf(kMinimalConfig + "[[unit]]\nid = \"\"\n") ==
        "site.toml:18: unit[0].id: expected an id of 1 to 64 letters, digits, '.', '_' or '-', "
        "got \"\"");
}

TEST_CASE("node keys: 64 hex digits, never echoed") {
  const std::string node = "[[node]]\nid = \"n2\"\n";
  const std::string channel = "[[node.channel]]\nid = \"ct1\"\n";
  std::string short_key = kTestKeyHex.substr(0, 62);
  CHECK(ErrorOf(kMinimalConfig + node + "key = \"" + short_key + "\"\n" + channel) ==
        "site.toml:19: node[1].key: expected 64 hex digits (a 32-byte key), got 62");
  std::string bad_key = kTestKeyHex;
  bad_key[9] = 'g';
  CHECK(ErrorOf(kMinimalConfig + node + "key = \"" + bad_key + "\"\n" + channel) ==
        "site.toml:19: node[1].key: expected 64 hex digits (a 32-byte key), but character 10 "
        "is not a hex digit");
  CHECK(ErrorOf(kMinimalConfig + node + channel) ==
        "site.toml:17: node[1].key: missing; a node with auth = \"cose\" needs key or key_file");
  CHECK(ErrorOf(kMinimalConfig + node + "key = \"" + kTestKeyHex + "\"\nkey_file = \"n2.key\"\n" +
                channel) == "site.toml:20: node[1].key_file: give key or key_file, not both");
  CHECK(ErrorOf(kMinimalConfig + node + "auth = \"hmac\"\n" + channel) ==
        "site.toml:19: node[1].auth: expected one of \"cose\", \"plain\"; got \"hmac\"");
  // A plain node needs no key, and may have one (e.g. while its firmware is being updated).
  CHECK(ErrorOf(kMinimalConfig + node + "auth = \"plain\"\n" + channel) == "OK");
  CHECK(ErrorOf(kMinimalConfig + node + "auth = \"plain\"\nkey = \"" + kTestKeyHex + "\"\n" +
                channel) == "OK");
}

TEST_CASE("a node needs channels") {
  CHECK(ErrorOf(kMinimalConfig + "[[node]]\nid = \"n2\"\nauth = \"plain\"\n") ==
        "site.toml:17: node[1].channel: missing; expected an array of tables ([[node.channel]])");
  CHECK(ErrorOf(kMinimalConfig + "[[node]]\nid = \"n2\"\nauth = \"plain\"\nchannel = []\n") ==
        "site.toml:20: node[1].channel: expected at least one [[node.channel]]");
}

TEST_CASE("circuit channels are node/channel pairs") {
  const std::string circuit = "[[circuit]]\nid = \"c2\"\n";
  CHECK(ErrorOf(kMinimalConfig + circuit + "channels = [\"n1/ct2\", \"ct3\"]\n") ==
        "site.toml:19: circuit[1].channels[1]: expected \"node/channel\" (two ids), got \"ct3\"");
  CHECK(ErrorOf(kMinimalConfig + circuit + "channels = []\n") ==
        "site.toml:19: circuit[1].channels: expected at least one \"node/channel\"");
  CHECK(ErrorOf(kMinimalConfig + circuit + "channels = [\"n1/ct2\"]\nvoltage_from = \"n1\"\n") ==
        "site.toml:20: circuit[1].voltage_from: expected \"node/channel\" (two ids), got \"n1\"");
  CHECK(ErrorOf(kMinimalConfig + circuit + "channels = [\"n1/ct2\"]\ndirection = \"import\"\n") ==
        "site.toml:20: circuit[1].direction: expected one of \"consumption\", \"export\"; got "
        "\"import\"");
}

TEST_CASE("one_leg_of_split_phase needs exactly one channel") {
  CHECK(ErrorOf(kMinimalConfig +
                "[[circuit]]\nid = \"c2\"\nchannels = [\"n1/ct2\"]\n"
                "one_leg_of_split_phase = true\n") ==
        "OK");
  CHECK(ErrorOf("[site]\nname = \"x\"\ntime_zone = \"UTC\"\nnominal_volts = [120, 240]\n"
                "[[node]]\nid = \"n1\"\nauth = \"plain\"\n"
                "[[node.channel]]\nid = \"a\"\n[[node.channel]]\nid = \"b\"\n"
                "[[circuit]]\nid = \"dryer\"\nchannels = [\"n1/a\", \"n1/b\"]\n"
                "one_leg_of_split_phase = true\n") ==
        "site.toml:15: circuit[0].one_leg_of_split_phase: applies only to a circuit with exactly "
        "one channel, got 2");
}

TEST_CASE("share rules and weights") {
  const std::string units = "[[unit]]\nid = \"a\"\n[[unit]]\nid = \"b\"\n";  // lines 17-20
  const std::string shared = "[[shared]]\ncircuit = \"c1\"\n";              // lines 21-22
  CHECK(ErrorOf(kMinimalConfig + units + shared +
                "rule = \"fixed\"\nunits = [\"a\", \"b\"]\nweights = [60, 30, 10]\n") ==
        "site.toml:25: shared[0].weights: expected 2 weights, one per unit, got 3");
  CHECK(ErrorOf(kMinimalConfig + units + shared + "rule = \"fixed\"\nweights = [60, 40]\n") ==
        "site.toml:21: shared[0].units: rule = \"fixed\" needs the units listed, one weight each");
  CHECK(ErrorOf(kMinimalConfig + units + shared + "rule = \"fixed\"\nunits = [\"a\", \"b\"]\n") ==
        "site.toml:21: shared[0].weights: missing; rule = \"fixed\" needs one weight per unit");
  CHECK(ErrorOf(kMinimalConfig + units + shared + "weights = [1, 1]\n") ==
        "site.toml:23: shared[0].weights: applies only to rule = \"fixed\"");
  CHECK(ErrorOf(kMinimalConfig + units + shared +
                "rule = \"fixed\"\nunits = [\"a\", \"b\"]\nweights = [1, 0]\n") ==
        "site.toml:25: shared[0].weights[1]: expected a number above 0 up to 1000000000, got 0");
  CHECK(ErrorOf(kMinimalConfig + units + shared + "rule = \"by-area\"\n") ==
        "site.toml:23: shared[0].rule: expected one of \"equal\", \"fixed\", \"proportional\"; "
        "got \"by-area\"");
  CHECK(ErrorOf(kMinimalConfig + units + "[[shared]]\nrule = \"equal\"\n") ==
        "site.toml:21: shared[0].circuit: missing; expected a string");
  CHECK(ErrorOf(kMinimalConfig + units + "[remainder]\nrule = \"fixed\"\nunits = [\"a\"]\n"
                                         "weights = [1]\nsplit = 1\n") ==
        "site.toml:25: remainder.split: unknown key; expected one of rule, units, weights");
}

// A site whose [site] table ends at line 5, then `site_extra` (so its first line is 6), then a
// node and a circuit.
std::string TariffSite(const std::string& site_extra) {
  return "[site]\nname = \"Test house\"\ntime_zone = \"Europe/Paris\"\nnominal_volts = [230]\n"
         "currency = \"EUR\"\n" + site_extra +
         "[[node]]\nid = \"n1\"\nauth = \"plain\"\n[[node.channel]]\nid = \"ct1\"\n"
         "[[circuit]]\nid = \"c1\"\nchannels = [\"n1/ct1\"]\n";
}

// A tariff file of one flat price; `currency` on line 2.
std::string FlatTariff(const std::string& currency, double price = 0.25) {
  return "name = \"Flat test rate\"\ncurrency = \"" + currency + "\"\n"
         "[[season]]\nname = \"all year\"\nfrom = \"01-01\"\nto = \"12-31\"\n"
         "default_period = \"all hours\"\n[[season.period]]\nname = \"all hours\"\nprice = " +
         std::to_string(price) + "\n";
}

// The error message of loading `site_text` as <dir>/site.toml, or "OK".
std::string LoadError(const testing::TempDir& dir, const std::string& site_text) {
  testing::WriteFile(dir.path() / "site.toml", site_text);
  Result<Config> config = LoadConfig(dir.File("site.toml"));
  return config.ok() ? "OK" : config.status().message();
}

TEST_CASE("site.tariff names a file of the tariff library, beside the config by default") {
  testing::TempDir dir;
  std::filesystem::create_directories(dir.path() / "tariffs");
  testing::WriteFile(dir.path() / "tariffs" / "flat.toml", FlatTariff("EUR"));
  testing::WriteFile(dir.path() / "site.toml", TariffSite("tariff = \"flat\"\n"));
  Result<Config> config = LoadConfig(dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  CHECK(config->site.tariff_dir == dir.File("tariffs"));
  REQUIRE(config->tariffs.size() == 1);
  CHECK(config->tariffs[0].name == "flat");
  CHECK(config->tariffs[0].path == dir.File("tariffs/flat.toml"));
  CHECK(config->tariffs[0].tariff.rates.name == "Flat test rate");

  const std::string site = dir.File("site.toml");
  CHECK(LoadError(dir, TariffSite("tariff = \"flatt\"\n")) ==
        site + ":6: site.tariff: no tariff \"flatt\" in the tariff library: \"" +
            dir.File("tariffs/flatt.toml") + "\" is not a file (site.tariff_dir is \"" +
            dir.File("tariffs") + "\")");
  CHECK(LoadError(dir, TariffSite("tariff_dir = \"\"\n")) ==
        site + ":6: site.tariff_dir: expected a folder path, got \"\"");
}

TEST_CASE("site.tariff_dir is relative to the config file's folder") {
  testing::TempDir dir;
  std::filesystem::create_directories(dir.path() / "library");
  testing::WriteFile(dir.path() / "library" / "flat.toml", FlatTariff(""));
  CHECK(LoadError(dir, TariffSite("tariff_dir = \"library/\"\ntariff = \"flat\"\n")) == "OK");
  CHECK(LoadError(dir, TariffSite("tariff_dir = \"library\"\ntariff = \"flat\"\n")) == "OK");
}

TEST_CASE("a tariff priced in another currency than the site's is refused") {
  testing::TempDir dir;
  std::filesystem::create_directories(dir.path() / "tariffs");
  testing::WriteFile(dir.path() / "tariffs" / "flat.toml", FlatTariff("USD"));
  CHECK(LoadError(dir, TariffSite("tariff = \"flat\"\n")) ==
        dir.File("site.toml") +
            ":6: site.tariff: tariff \"flat\" is priced in USD, the site's currency is EUR");
}

TEST_CASE("an error inside a tariff file names the tariff file, line and key") {
  testing::TempDir dir;
  std::filesystem::create_directories(dir.path() / "tariffs");
  testing::WriteFile(dir.path() / "tariffs" / "flat.toml",
                     "minimum_bill = \"ten\"\n" + FlatTariff("EUR"));
  CHECK(LoadError(dir, TariffSite("tariff = \"flat\"\n")) ==
        dir.File("tariffs/flat.toml") +
            ":1: minimum_bill: expected a number from 0 to 1000000000, got a string");
}

TEST_CASE("dated tariff changes: dates in order, each tariff read once") {
  testing::TempDir dir;
  std::filesystem::create_directories(dir.path() / "tariffs");
  testing::WriteFile(dir.path() / "tariffs" / "flat.toml", FlatTariff("EUR"));
  testing::WriteFile(dir.path() / "tariffs" / "dearer.toml", FlatTariff("EUR", 0.31));
  const std::string site = dir.File("site.toml");
  const std::string two_changes =
      "tariff = \"flat\"\n"                                                 // 6
      "[[site.tariff_change]]\nfrom = 2026-06-01\ntariff = \"dearer\"\n"   // 7-9
      "[[site.tariff_change]]\nfrom = 2027-01-01\ntariff = \"flat\"\n";    // 10-12
  testing::WriteFile(dir.path() / "site.toml", TariffSite(two_changes));
  Result<Config> config = LoadConfig(site);
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  REQUIRE(config->site.tariff_changes.size() == 2);
  CHECK(config->site.tariff_changes[0].from == date::year{2026} / 6 / 1);
  CHECK(config->site.tariff_changes[0].tariff == "dearer");
  CHECK(config->site.tariff_changes[1].tariff == "flat");
  REQUIRE(config->tariffs.size() == 2);
  CHECK(config->tariffs[1].name == "dearer");

  CHECK(LoadError(dir, TariffSite("[[site.tariff_change]]\nfrom = 2026-06-01\n"
                                  "tariff = \"dearer\"\n")) ==
        site + ":1: site.tariff: missing; [[site.tariff_change]] needs the tariff in force "
               "before the first change");
  CHECK(LoadError(dir, TariffSite("tariff = \"flat\"\n[[site.tariff_change]]\n"
                                  "from = \"2026-06-01\"\ntariff = \"dearer\"\n")) ==
        site + ":8: site.tariff_change[0].from: expected a date such as 2026-06-01 (written "
               "without quotes), got a string");
  CHECK(LoadError(dir, TariffSite("tariff = \"flat\"\n[[site.tariff_change]]\n"
                                  "tariff = \"dearer\"\n")) ==
        site + ":7: site.tariff_change[0].from: missing; expected a date such as 2026-06-01 "
               "(written without quotes)");
  CHECK(LoadError(dir, TariffSite("tariff = \"flat\"\n"
                                  "[[site.tariff_change]]\nfrom = 2027-01-01\ntariff = \"dearer\"\n"
                                  "[[site.tariff_change]]\nfrom = 2027-01-01\ntariff = \"flat\"\n")) ==
        site + ":11: site.tariff_change[1].from: expected a date after 2027-01-01 (the change "
               "before); list changes in date order");
  CHECK(LoadError(dir, TariffSite("tariff = \"flat\"\n[[site.tariff_change]]\n"
                                  "from = 2026-06-01\ntariff = \"dear\"\n")) ==
        site + ":9: site.tariff_change[0].tariff: no tariff \"dear\" in the tariff library: \"" +
            dir.File("tariffs/dear.toml") + "\" is not a file (site.tariff_dir is \"" +
            dir.File("tariffs") + "\")");
  CHECK(LoadError(dir, TariffSite("tariff = \"flat\"\n[[site.tariff_change]]\n"
                                  "from = 2026-06-01\ntariff = \"dearer\"\nprice = 2\n")) ==
        site + ":10: site.tariff_change[0].price: unknown key; expected one of from, tariff");
  CHECK(LoadError(dir, TariffSite("tariff = \"flat\"\n[[site.tariff_change]]\n"
                                  "from = 2026-02-30\ntariff = \"dearer\"\n"))
            .find(site + ":8: TOML syntax: ") == 0);
}

TEST_CASE("storage, ingest, http and log sections") {
  CHECK(ErrorOf(kMinimalConfig + "[storage]\npath = \"\"\n") ==
        "site.toml:18: storage.path: expected a file path, got \"\"");
  CHECK(ErrorOf(kMinimalConfig + "[storage]\nsynchronous = \"fast\"\n") ==
        "site.toml:18: storage.synchronous: expected one of \"off\", \"normal\", \"full\", "
        "\"extra\"; got \"fast\"");
  CHECK(ErrorOf(kMinimalConfig + "[storage]\nbatch_rows = 0\n") ==
        "site.toml:18: storage.batch_rows: expected an integer from 1 to 100000, got 0");
  CHECK(ErrorOf(kMinimalConfig + "[ingest]\nlisten = \"4717\"\n") ==
        "site.toml:18: ingest.listen: expected \"host:port\" or \"[IPv6]:port\" with a port from "
        "0 to 65535, got \"4717\"");
  // 65507 = 65535 - 8 (UDP header, RFC 768) - 20 (IPv4 header, RFC 791): the largest payload.
  CHECK(ErrorOf(kMinimalConfig + "[ingest]\nmax_datagram_bytes = 65508\n") ==
        "site.toml:18: ingest.max_datagram_bytes: expected an integer from 64 to 65507, got 65508");
  CHECK(ErrorOf(kMinimalConfig + "[http]\nlisten = \"[::1]:99999\"\n") ==
        "site.toml:18: http.listen: expected \"host:port\" or \"[IPv6]:port\" with a port from 0 "
        "to 65535, got \"[::1]:99999\"");
  CHECK(ErrorOf(kMinimalConfig + "[http]\ntls_certificate = \"cert.pem\"\n") ==
        "site.toml:17: http.tls_private_key: missing; give both tls_certificate and "
        "tls_private_key, or neither");
  CHECK(ErrorOf(kMinimalConfig + "[http]\nthreads = 0\n") ==
        "site.toml:18: http.threads: expected an integer from 1 to 256, got 0");
  CHECK(ErrorOf(kMinimalConfig + "[log]\nlevel = \"verbose\"\n") ==
        "site.toml:18: log.level: expected one of \"trace\", \"debug\", \"info\", \"warn\", "
        "\"error\", \"off\"; got \"verbose\"");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
