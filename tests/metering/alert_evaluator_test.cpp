// tests/metering/alert_evaluator_test.cpp
// From stored channel readings to per-circuit, per-unit and per-node alert outcomes.
#include "daemon/metering/alert_evaluator.h"

#include <doctest/doctest.h>

#include "tests/config/config_text.h"

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1772409600000;  // 2026-03-02T00:00:00Z

const std::string kSite = R"(
[site]
name = "Evaluator test"
time_zone = "UTC"
nominal_volts = [120, 240]

[[node]]
id = "n1"
auth = "plain"
[[node.channel]]
id = "a"
[[node.channel]]
id = "b"
[[node.channel]]
id = "c"

[[circuit]]
id = "range"
channels = ["n1/a", "n1/b"]
[[circuit]]
id = "lights"
channels = ["n1/c"]

[[unit]]
id = "flat"
circuits = ["range", "lights"]

[[alert]]
id = "big"
kind = "power_above"
circuits = ["range"]
units = ["flat"]
level_watts = 3000

[[alert]]
id = "quiet"
kind = "node_silent"
missed_intervals = 2
)";

Config Load() {
  Result<Config> config = ParseConfig(kSite, "evaluator.toml");
  REQUIRE(config.ok());
  return *config;
}

ChannelReading Reading(int channel, UnixMs end_ms, double watts) {
  ChannelReading reading;
  reading.channel = channel;
  reading.end_ms = end_ms;
  reading.duration_ms = 10000;
  reading.real_watts = watts;
  return reading;
}

TEST_SUITE("metering") {
  TEST_CASE("alert evaluator: one slot per rule and subject, in config order") {
    Config config = Load();
    Result<AlertEvaluator> evaluator = AlertEvaluator::Create(config);
    REQUIRE(evaluator.ok());
    REQUIRE(evaluator->slots().size() == 3);
    CHECK(evaluator->slots()[0].subject == "circuit:range");
    CHECK(evaluator->slots()[1].subject == "unit:flat");
    CHECK(evaluator->slots()[2].subject == "node:n1");  // no nodes listed: every node
  }

  TEST_CASE("alert evaluator: a circuit sums its channels, a unit its circuits") {
    Config config = Load();
    AlertEvaluator evaluator = AlertEvaluator::Create(config).value();
    std::vector<AlertOutcome> out;
    // Two legs of 1600 W each: 3200 W on the range circuit; the unit adds 100 W of lights.
    evaluator.OnReadings({Reading(0, kT0, 1600), Reading(2, kT0, 100), Reading(1, kT0, 1600)},
                         kT0 + 500, &out);
    REQUIRE(out.size() == 2);
    CHECK(out[0].rule == "big");
    CHECK(out[0].subject == "circuit:range");
    CHECK(out[0].transition.Value("watts") == 3200);
    CHECK(out[1].subject == "unit:flat");
    CHECK(out[1].transition.Value("watts") == 3300);
    // Only the lights change: the unit is evaluated with the range's newest power.
    out.clear();
    evaluator.OnReadings({Reading(2, kT0 + 10000, 0)}, kT0 + 10500, &out);
    CHECK(out.empty());
    evaluator.OnReadings({Reading(0, kT0 + 20000, 500)}, kT0 + 20500, &out);
    REQUIRE(out.size() == 2);  // 2100 W on the range: both clear
    CHECK(out[0].transition.kind == AlertEventKind::kCleared);
    CHECK(out[1].transition.Value("watts") == 2100);
  }

  TEST_CASE("alert evaluator: readings in one batch are taken in time order") {
    Config config = Load();
    AlertEvaluator evaluator = AlertEvaluator::Create(config).value();
    std::vector<AlertOutcome> out;
    evaluator.OnReadings({Reading(0, kT0 + 10000, 0), Reading(1, kT0 + 10000, 0),
                          Reading(0, kT0, 2000), Reading(1, kT0, 2000)},
                         kT0 + 10500, &out);
    REQUIRE(out.size() == 4);  // raised at kT0, cleared at kT0 + 10 s, for circuit and unit
    CHECK(out[0].transition.kind == AlertEventKind::kRaised);
    CHECK(out[0].transition.at_ms == kT0);
    CHECK(out[2].transition.kind == AlertEventKind::kCleared);
  }

  TEST_CASE("alert evaluator: silence comes from ticks, its deadline from the last commit") {
    Config config = Load();
    AlertEvaluator evaluator = AlertEvaluator::Create(config).value();
    CHECK_FALSE(evaluator.NextDeadline().has_value());
    std::vector<AlertOutcome> out;
    evaluator.OnReadings({Reading(2, kT0, 10)}, kT0 + 300, &out);
    // The unit's rule saw a sample (its newest time moved) and the node was heard.
    CHECK(evaluator.TakeChanged() == std::vector<int>{1, 2});
    CHECK(evaluator.TakeChanged().empty());
    CHECK(evaluator.NextDeadline() == kT0 + 300 + 20000 + 1);
    evaluator.OnTick(kT0 + 20300, &out);
    CHECK(out.empty());
    evaluator.OnTick(kT0 + 20301, &out);
    REQUIRE(out.size() == 1);
    CHECK(out[0].subject == "node:n1");
    CHECK(out[0].transition.kind == AlertEventKind::kSilent);
    CHECK(evaluator.TakeChanged() == std::vector<int>{2});
  }

  TEST_CASE("alert evaluator: after a restart a node's silence counts from the restart") {
    Config config = Load();
    AlertEvaluator evaluator = AlertEvaluator::Create(config).value();
    std::vector<AlertOutcome> out;
    evaluator.OnReadings({Reading(2, kT0, 10)}, kT0, &out);
    (void)evaluator.TakeChanged();
    // Stopped for an hour: without Resume the first tick would call the node silent.
    evaluator.Resume(kT0 + 3'600'000);
    CHECK(evaluator.TakeChanged() == std::vector<int>{2});
    evaluator.OnTick(kT0 + 3'600'000 + 20'000, &out);
    CHECK(out.empty());
    evaluator.OnTick(kT0 + 3'600'000 + 20'001, &out);
    REQUIRE(out.size() == 1);
    CHECK(out[0].transition.Value("last_heard") == kT0 + 3'600'000);
    // A node already silent stays silent, with its real last-heard time.
    AlertEvaluator again = AlertEvaluator::Create(config).value();
    REQUIRE(again.Restore("quiet", "node:n1", evaluator.slots()[2].state));
    again.Resume(kT0 + 7'200'000);
    CHECK(again.slots()[2].state.last_ms == kT0 + 3'600'000);
  }

  TEST_CASE("alert evaluator: a restored state carries on where it was") {
    Config config = Load();
    config.alerts[0].hold_seconds = 30;
    AlertEvaluator first = AlertEvaluator::Create(config).value();
    std::vector<AlertOutcome> out;
    first.OnReadings({Reading(0, kT0, 2000), Reading(1, kT0, 2000)}, kT0, &out);
    CHECK(out.empty());  // holding
    AlertEvaluator second = AlertEvaluator::Create(config).value();
    for (const AlertSlot& slot : first.slots()) {
      CHECK(second.Restore(config.alerts[slot.rule].id, slot.subject, slot.state));
    }
    CHECK_FALSE(second.Restore("big", "circuit:lights", AlertState{}));
    second.OnReadings({Reading(0, kT0 + 20000, 2000), Reading(1, kT0 + 20000, 2000)},
                      kT0 + 20000, &out);
    REQUIRE(out.size() == 2);  // hold met: began at kT0 - 10 s, 30 s later
    CHECK(out[0].transition.Value("held_s") == 30);
  }
}

}  // namespace
}  // namespace ampledger
