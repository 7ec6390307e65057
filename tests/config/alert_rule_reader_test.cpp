// tests/config/alert_rule_reader_test.cpp
// [[alert]] tables: each kind takes its own keys; whole messages compared.
#include "config/alert_rule_reader.h"

#include <doctest/doctest.h>

#include "tests/config/config_text.h"

namespace ampledger {
namespace {

using testing::ErrorOf;
using testing::kMinimalConfig;

TEST_SUITE("config") {

TEST_CASE("alert rules take the keys of their kind") {
  const std::string alert = "[[alert]]\nid = \"r1\"\n";  // lines 17-18
  CHECK(ErrorOf(kMinimalConfig + alert + "circuits = [\"c1\"]\n") ==
        "site.toml:17: alert[0].kind: missing; expected a string");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"spike\"\n") ==
        "site.toml:19: alert[0].kind: expected one of \"power_above\", \"power_below\", "
        "\"budget\", \"cycle_done\", \"left_on\", \"node_silent\", \"standby_creep\"; got "
        "\"spike\"");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"node_silent\"\nlevel_watts = 5\n") ==
        "site.toml:20: alert[0].level_watts: does not apply to kind = \"node_silent\"");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"power_above\"\nlevel = 5\n") ==
        "site.toml:20: alert[0].level: unknown key; expected one of id, kind, circuits, units, "
        "nodes, level_watts, clear_watts, hold_seconds, quiet_seconds, min_run_seconds, "
        "missed_intervals, nights, window_start, window_end, budget_kwh, budget_cost, "
        "budget_period");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"power_above\"\nlevel_watts = 500\n") ==
        "site.toml:17: alert[0].circuits: missing; expected circuits or units to watch");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"power_above\"\ncircuits = [\"c1\"]\n") ==
        "site.toml:17: alert[0].level_watts: missing; expected a number above 0 up to 1000000");
  CHECK(ErrorOf(kMinimalConfig + alert +
                "kind = \"power_above\"\ncircuits = [\"c1\"]\nlevel_watts = 500\n"
                "clear_watts = 600\n") ==
        "site.toml:22: alert[0].clear_watts: expected a number from 0 to 500, got 600");
  CHECK(ErrorOf(kMinimalConfig + alert +
                "kind = \"power_below\"\ncircuits = [\"c1\"]\nlevel_watts = 500\n"
                "clear_watts = 400\n") ==
        "site.toml:22: alert[0].clear_watts: expected a number from 500 to 1000000, got 400");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"cycle_done\"\nunits = [\"u\"]\n") ==
        "site.toml:20: alert[0].units: does not apply to kind = \"cycle_done\"");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"left_on\"\ncircuits = [\"c1\"]\n"
                                         "level_watts = 50\n") ==
        "site.toml:17: alert[0].hold_seconds: missing; kind = \"left_on\" needs hold_seconds > 0 "
        "or window_start and window_end");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"left_on\"\ncircuits = [\"c1\"]\n"
                                         "level_watts = 50\nwindow_start = \"23:00\"\n") ==
        "site.toml:17: alert[0].window_end: missing; give both window_start and window_end, or "
        "neither");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"left_on\"\ncircuits = [\"c1\"]\n"
                                         "level_watts = 50\nwindow_start = \"23:00\"\n"
                                         "window_end = \"24:30\"\n") ==
        "site.toml:23: alert[0].window_end: expected a local time \"HH:MM\" from \"00:00\" to "
        "\"23:59\", got \"24:30\"");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"left_on\"\ncircuits = [\"c1\"]\n"
                                         "level_watts = 50\nwindow_start = \"23:00\"\n"
                                         "window_end = \"23:00\"\n") ==
        "site.toml:23: alert[0].window_end: expected a time other than window_start, got "
        "\"23:00\"");
  // A window may cross midnight.
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"left_on\"\ncircuits = [\"c1\"]\n"
                                         "level_watts = 50\nwindow_start = \"23:00\"\n"
                                         "window_end = \"06:00\"\n") == "OK");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"budget\"\ncircuits = [\"c1\"]\n"
                                         "budget_kwh = 10\nbudget_cost = 3\n") ==
        "site.toml:21: alert[0].budget_kwh: give budget_kwh or budget_cost, not both");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"budget\"\nunits = [\"u\"]\n") ==
        "site.toml:17: alert[0].budget_kwh: missing; expected budget_kwh or budget_cost");
  CHECK(ErrorOf(kMinimalConfig + alert + "kind = \"node_silent\"\nmissed_intervals = 0\n") ==
        "site.toml:20: alert[0].missed_intervals: expected an integer from 1 to 1000, got 0");
}

TEST_CASE("alert defaults") {
  Result<Config> config =
      ParseConfig(kMinimalConfig +
                      "[[alert]]\nid = \"a\"\nkind = \"cycle_done\"\ncircuits = [\"c1\"]\n"
                      "level_watts = 300\n"
                      "[[alert]]\nid = \"b\"\nkind = \"node_silent\"\n"
                      "[[alert]]\nid = \"c\"\nkind = \"budget\"\ncircuits = [\"c1\"]\n"
                      "budget_kwh = 12\n",
                  "site.toml");
  REQUIRE(config.ok());
  CHECK(config->alerts[0].clear_watts == 300);  // defaults to level_watts
  CHECK(config->alerts[0].quiet_seconds == 0);
  CHECK(config->alerts[1].nodes.empty());  // every node
  CHECK(config->alerts[1].missed_intervals == 3);
  CHECK(config->alerts[2].budget_kwh == 12);
  CHECK(config->alerts[2].budget_period == "day");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
