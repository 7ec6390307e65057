// tests/reference/cost_budget_reference_test.cpp
// A weekly cost budget through the whole alert path (config file, tariff library file, tariff
// schedule, pricer, evaluator) against the hand computation of
// tests/reference/data/tariffs/WORKED-EXAMPLES.md 2.1 [HAND], from the Ontario Energy Board's
// published time-of-use prices of 1 Nov 2025 [PUB]: a constant 1 kW load for one ordinary
// Monday-to-Sunday winter week is on-peak 30 h, mid-peak 30 h, off-peak 108 h ->
// 30 x 0.203 + 30 x 0.157 + 108 x 0.098 = $21.384 of energy charge.
#include <doctest/doctest.h>

#include "daemon/metering/alert_evaluator.h"
#include "test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;

// The library file config/tariffs/time-of-use-rebate-then-tax.toml carries those prices.
Config TorontoSite(const testing::TempDir& dir) {
  const std::string text =
      "[site]\nname = \"Reference week\"\ntime_zone = \"America/Toronto\"\n"
      "nominal_volts = [120]\ncurrency = \"CAD\"\n"
      "tariff_dir = \"" + (testing::SourceDir() / "config" / "tariffs").string() + "\"\n"
      "tariff = \"time-of-use-rebate-then-tax\"\n"
      "[[node]]\nid = \"n1\"\nauth = \"plain\"\n[[node.channel]]\nid = \"a\"\n"
      "[[circuit]]\nid = \"load\"\nchannels = [\"n1/a\"]\n"
      "[[alert]]\nid = \"at-budget\"\nkind = \"budget\"\ncircuits = [\"load\"]\n"
      "budget_period = \"week\"\nbudget_cost = 21.384\n"
      "[[alert]]\nid = \"under-budget\"\nkind = \"budget\"\ncircuits = [\"load\"]\n"
      "budget_period = \"week\"\nbudget_cost = 21.383\n";
  Result<Config> config = ParseConfig(text, dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  return *config;
}

TEST_SUITE("reference") {
  TEST_CASE("a weekly cost budget of the Ontario TOU week at 1 kW: $21.384 is met, not passed") {
    testing::TempDir dir;
    Config config = TorontoSite(dir);
    Result<TariffSchedule> schedule = TariffSchedule::Create(config);
    REQUIRE(schedule.ok());
    Result<AlertEvaluator> evaluator = AlertEvaluator::Create(config, &*schedule);
    REQUIRE_MESSAGE(evaluator.ok(), evaluator.status().ToString());
    // The week of Monday 12 January 2026 (no Ontario TOU holiday), Toronto: local midnights
    // from the machine's IANA tz data.
    Result<LocalTime> toronto = LocalTime::ForZone("America/Toronto");
    REQUIRE(toronto.ok());
    const UnixMs start = toronto->Day(2026_y / 1 / 12).value().start_ms;
    const UnixMs end = toronto->Day(2026_y / 1 / 19).value().start_ms;
    REQUIRE(end - start == 168 * 3'600'000LL);
    std::vector<AlertOutcome> out;
    for (UnixMs t = start + 60'000; t <= end; t += 60'000) {  // 1-minute readings at 1 kW
      ChannelReading reading;
      reading.channel = 0;
      reading.end_ms = t;
      reading.duration_ms = 60'000;
      reading.real_watts = 1000;
      evaluator->OnReadings({reading}, t, &out);
    }
    const AlertState& at_budget = evaluator->slots()[0].state;
    CHECK(at_budget.cost == doctest::Approx(21.384).epsilon(1e-12));
    CHECK(at_budget.energy_wh == doctest::Approx(168'000));
    // Weekdays cost more than the week's average, so both rules are on course to exceed from
    // a tenth of the week on (Monday 16:48); only the budget one thousandth lower is passed,
    // by the week's last reading.
    REQUIRE(out.size() == 3);
    CHECK(out[0].rule == "at-budget");
    CHECK(out[0].transition.reason == "on course to exceed");
    CHECK(out[0].transition.at_ms == start + 1008 * 60'000);
    CHECK(out[1].rule == "under-budget");
    CHECK(out[1].transition.reason == "on course to exceed");
    CHECK(out[2].rule == "under-budget");
    CHECK(out[2].transition.reason == "budget exceeded");
    CHECK(out[2].transition.at_ms == end);
    CHECK(out[2].transition.Value("used_cost") == doctest::Approx(21.384).epsilon(1e-12));
  }
}

}  // namespace
}  // namespace ampledger
