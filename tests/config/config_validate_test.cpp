// tests/config/config_validate_test.cpp
// References between sections: whole messages compared, at the line of the key concerned.
#include "config/config_validate.h"

#include <doctest/doctest.h>

#include "tests/config/config_text.h"

namespace ampledger {
namespace {

using testing::ErrorOf;
using testing::kMinimalConfig;

// Two units and a second circuit, appended to the minimal config (lines 17-26).
const std::string kWithUnits = kMinimalConfig +
                               "[[circuit]]\n"             // 17
                               "id = \"c2\"\n"             // 18
                               "channels = [\"n1/ct2\"]\n" // 19
                               "[[unit]]\n"                // 20
                               "id = \"a\"\n"              // 21
                               "circuits = [\"c1\"]\n"     // 22
                               "[[unit]]\n"                // 23
                               "id = \"b\"\n";             // 24

TEST_SUITE("config") {

TEST_CASE("duplicate ids") {
  CHECK(ErrorOf(kMinimalConfig + "[[node]]\nid = \"n1\"\nauth = \"plain\"\n"
                                 "[[node.channel]]\nid = \"ct1\"\n") ==
        "site.toml:18: node[1].id: duplicate node id \"n1\", first used by node[0]");
  CHECK(ErrorOf(kMinimalConfig + "[[node]]\nid = \"n2\"\nauth = \"plain\"\n"
                                 "[[node.channel]]\nid = \"ct1\"\n"
                                 "[[node.channel]]\nid = \"ct1\"\n") ==
        "site.toml:23: node[1].channel[1].id: duplicate channel id \"ct1\" on node \"n2\", first "
        "used by node[1].channel[0]");
  CHECK(ErrorOf(kMinimalConfig + "[[circuit]]\nid = \"c1\"\nchannels = [\"n1/ct2\"]\n") ==
        "site.toml:18: circuit[1].id: duplicate circuit id \"c1\", first used by circuit[0]");
  CHECK(ErrorOf(kWithUnits + "[[unit]]\nid = \"a\"\n") ==
        "site.toml:26: unit[2].id: duplicate unit id \"a\", first used by unit[0]");
  const std::string rule = "kind = \"node_silent\"\n";
  CHECK(ErrorOf(kMinimalConfig + "[[alert]]\nid = \"r\"\n" + rule + "[[alert]]\nid = \"r\"\n" +
                rule) ==
        "site.toml:21: alert[1].id: duplicate alert id \"r\", first used by alert[0]");
}

TEST_CASE("circuits name configured channels, each channel feeding one circuit") {
  const std::string circuit = "[[circuit]]\nid = \"dryer\"\n";
  CHECK(ErrorOf(kMinimalConfig + circuit + "channels = [\"n1/ct2\", \"garage/ct9\"]\n") ==
        "site.toml:19: circuit[1].channels[1]: no node \"garage\"");
  CHECK(ErrorOf(kMinimalConfig + circuit + "channels = [\"n1/ct2\",\n  \"n1/ct9\"]\n") ==
        "site.toml:20: circuit[1].channels[1]: no channel \"ct9\" on node \"n1\"");
  CHECK(ErrorOf(kMinimalConfig + circuit + "channels = [\"n1/ct1\"]\n") ==
        "site.toml:19: circuit[1].channels[0]: channel \"n1/ct1\" already feeds circuit \"c1\"");
  CHECK(ErrorOf(kMinimalConfig + circuit + "channels = [\"n1/ct2\", \"n1/ct2\"]\n") ==
        "site.toml:19: circuit[1].channels[1]: channel \"n1/ct2\" already feeds circuit "
        "\"dryer\"");
  CHECK(ErrorOf(kMinimalConfig + circuit +
                "channels = [\"n1/ct2\"]\nvoltage_from = \"n1/ct7\"\n") ==
        "site.toml:20: circuit[1].voltage_from: no channel \"ct7\" on node \"n1\"");
  // voltage_from may name a channel that feeds another circuit: the node measures voltage.
  CHECK(ErrorOf(kMinimalConfig + circuit +
                "channels = [\"n1/ct2\"]\nvoltage_from = \"n1/ct1\"\n") == "OK");
}

TEST_CASE("units own existing circuits, each circuit at most one unit") {
  CHECK(ErrorOf(kWithUnits) == "OK");
  CHECK(ErrorOf(kWithUnits + "circuits = [\"c2\", \"c3\"]\n") ==
        "site.toml:25: unit[1].circuits[1]: no circuit \"c3\"");
  CHECK(ErrorOf(kWithUnits + "circuits = [\"c2\", \"c1\"]\n") ==
        "site.toml:25: unit[1].circuits[1]: circuit \"c1\" already belongs to unit \"a\"");
  CHECK(ErrorOf(kWithUnits + "circuits = [\"c2\", \"c2\"]\n") ==
        "site.toml:25: unit[1].circuits[1]: circuit \"c2\" is listed twice");
}

TEST_CASE("shared circuits: existing, not owned, shared once, among existing units") {
  CHECK(ErrorOf(kWithUnits + "[[shared]]\ncircuit = \"c2\"\n") == "OK");
  CHECK(ErrorOf(kWithUnits + "[[shared]]\ncircuit = \"c9\"\n") ==
        "site.toml:26: shared[0].circuit: no circuit \"c9\"");
  CHECK(ErrorOf(kWithUnits + "[[shared]]\ncircuit = \"c1\"\n") ==
        "site.toml:26: shared[0].circuit: circuit \"c1\" belongs to unit \"a\"; a circuit is "
        "owned by one unit or shared, not both");
  CHECK(ErrorOf(kWithUnits + "[[shared]]\ncircuit = \"c2\"\n[[shared]]\ncircuit = \"c2\"\n") ==
        "site.toml:28: shared[1].circuit: circuit \"c2\" is already shared by shared[0]");
  CHECK(ErrorOf(kWithUnits + "[[shared]]\ncircuit = \"c2\"\nunits = [\"a\", \"c\"]\n") ==
        "site.toml:27: shared[0].units[1]: no unit \"c\"");
  CHECK(ErrorOf(kWithUnits + "[[shared]]\ncircuit = \"c2\"\nunits = [\"a\", \"a\"]\n") ==
        "site.toml:27: shared[0].units[1]: unit \"a\" is listed twice");
  CHECK(ErrorOf(kMinimalConfig + "[[shared]]\ncircuit = \"c1\"\n") ==
        "site.toml:17: shared[0].units: no units to share among; the file has no [[unit]]");
  CHECK(ErrorOf(kWithUnits + "[remainder]\nrule = \"proportional\"\nunits = [\"z\"]\n") ==
        "site.toml:27: remainder.units[0]: no unit \"z\"");
}

TEST_CASE("alert subjects exist") {
  CHECK(ErrorOf(kWithUnits + "[[alert]]\nid = \"r\"\nkind = \"power_above\"\nlevel_watts = 10\n"
                             "circuits = [\"c1\", \"oven\"]\n") ==
        "site.toml:29: alert[0].circuits[1]: no circuit \"oven\"");
  CHECK(ErrorOf(kWithUnits + "[[alert]]\nid = \"r\"\nkind = \"standby_creep\"\nlevel_watts = 10\n"
                             "units = [\"flat-9\"]\n") ==
        "site.toml:29: alert[0].units[0]: no unit \"flat-9\"");
  CHECK(ErrorOf(kWithUnits + "[[alert]]\nid = \"r\"\nkind = \"node_silent\"\n"
                             "nodes = [\"n1\", \"attic\"]\n") ==
        "site.toml:28: alert[0].nodes[1]: no node \"attic\"");
}

TEST_CASE("a cost budget needs the site tariff") {
  const std::string budget = "[[alert]]\n"             // 17
                             "id = \"spend\"\n"         // 18
                             "kind = \"budget\"\n"      // 19
                             "circuits = [\"c1\"]\n";   // 20
  CHECK(ErrorOf(kMinimalConfig + budget + "budget_period = \"week\"\nbudget_cost = 12.5\n") ==
        "site.toml:22: alert[0].budget_cost: needs site.tariff, whose prices cost the energy; "
        "set site.tariff or use budget_kwh");
  CHECK(ErrorOf(kMinimalConfig + budget + "budget_kwh = 40\n") == "OK");
}

TEST_CASE("resent readings must outlive retention") {
  CHECK(ErrorOf(kMinimalConfig + "[storage]\nraw_retention_days = 2\n"
                                 "[ingest]\nresend_horizon_seconds = 172800\n") == "OK");
  CHECK(ErrorOf(kMinimalConfig + "[storage]\nraw_retention_days = 2\n"
                                 "[ingest]\nresend_horizon_seconds = 172801\n") ==
        "site.toml:20: ingest.resend_horizon_seconds: expected at most storage.raw_retention_days "
        "(2 days = 172800 s), or retention would delete resent readings as they arrive");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
