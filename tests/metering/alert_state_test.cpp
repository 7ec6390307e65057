// tests/metering/alert_state_test.cpp
#include "daemon/metering/alert_state.h"

#include <doctest/doctest.h>

#include <limits>

namespace ampledger {
namespace {

TEST_SUITE("metering") {
  TEST_CASE("alert state: every field round-trips exactly") {
    AlertState state;
    state.phase = AlertPhase::kQuieting;
    state.since_ms = 1772409600123;
    state.quiet_since_ms = -5;
    state.last_ms = std::numeric_limits<std::int64_t>::max();
    state.energy_wh = 0.1 + 0.2;  // not exactly 0.3: the shortest exact form must survive
    state.tail_wh = 1e-300;
    state.extreme_w = -123.456;
    state.interval_ms = 10000;
    state.count = 7;
    state.stage = 2;
    state.night = 20514;
    state.samples = 42;
    state.cost = 12.345678901;
    state.tail_cost = 0.07;
    Result<AlertState> back = AlertState::Parse(state.Serialize());
    REQUIRE(back.ok());
    CHECK(*back == state);
    CHECK(AlertState::Parse(AlertState{}.Serialize()).value() == AlertState{});
  }

  TEST_CASE("alert state: a state stored before costs were kept reads with costs of 0") {
    // Serialize()'s form before the cost fields were added (a database of an older build).
    const std::string older =
        "phase=raised since=1772409600000 quiet=0 last=1772413200000 wh=2500.5 tail=0 "
        "extreme=0 interval=0 count=0 stage=1 night=0 samples=0";
    Result<AlertState> state = AlertState::Parse(older);
    REQUIRE(state.ok());
    CHECK(state->phase == AlertPhase::kRaised);
    CHECK(state->energy_wh == 2500.5);
    CHECK(state->stage == 1);
    CHECK(state->cost == 0);
    CHECK(state->tail_cost == 0);
    CHECK(AlertState::Parse(older + " cost=1.5").value().cost == 1.5);
    CHECK(AlertState::Parse(older + " cost=x").status().message() ==
          "alert state: field \"cost\" does not read: \"cost=x\"");
    CHECK(AlertState::Parse(older + " ").status().message() ==
          "alert state: field \"cost\" does not read: \"\"");
  }

  TEST_CASE("alert state: damaged text is Corruption naming the field") {
    std::string text = AlertState{}.Serialize();
    CHECK(text.rfind("phase=calm since=0 quiet=0 last=0 wh=0", 0) == 0);
    Result<AlertState> bad = AlertState::Parse("phase=asleep" + text.substr(10));
    REQUIRE_FALSE(bad.ok());
    CHECK(bad.status().code() == StatusCode::kCorruption);
    CHECK(bad.status().message() == "alert state: field \"phase\" does not read: \"phase=asleep\"");
    std::string swapped = text;
    swapped.replace(swapped.find("wh=0"), 4, "wh=x");
    CHECK(AlertState::Parse(swapped).status().message() ==
          "alert state: field \"wh\" does not read: \"wh=x\"");
    CHECK(AlertState::Parse(text + " extra=1").status().message() ==
          "alert state: unexpected text after the last field: \"extra=1\"");
    CHECK_FALSE(AlertState::Parse(text.substr(0, text.size() - 10)).ok());
    CHECK_FALSE(AlertState::Parse("").ok());
  }
}

}  // namespace
}  // namespace ampledger
