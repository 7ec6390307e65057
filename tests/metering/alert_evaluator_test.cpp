// tests/metering/alert_evaluator_test.cpp
// From stored channel readings to per-circuit, per-unit and per-node alert outcomes.
#include "daemon/metering/alert_evaluator.h"

#include <doctest/doctest.h>

#include <filesystem>

#include "test_util.h"
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

// One price all day, every day (our test prices).
std::string FlatTariff(const std::string& title, const std::string& price) {
  return "name = \"" + title + "\"\n"
         "[[season]]\nname = \"all year\"\nfrom = \"01-01\"\nto = \"12-31\"\n"
         "default_period = \"any\"\n"
         "[[season.period]]\nname = \"any\"\nprice = " + price + "\n";
}

// A site in `zone` priced by tariff "cheap" (0.10 a kWh), with `site_extra` after its site
// keys (a [[site.tariff_change]] to "dear", 0.20 a kWh) and the cost budgets `alerts` on the
// one-channel circuit "range"; its tariffs in a temporary folder.
struct PricedSite {
  PricedSite(const std::string& zone, const std::string& site_extra, const std::string& alerts) {
    std::filesystem::create_directory(dir.path() / "tariffs");
    testing::WriteFile(dir.path() / "tariffs" / "cheap.toml", FlatTariff("Cheap", "0.10"));
    testing::WriteFile(dir.path() / "tariffs" / "dear.toml", FlatTariff("Dear", "0.20"));
    const std::string text = "[site]\nname = \"Priced\"\ntime_zone = \"" + zone +
                             "\"\nnominal_volts = [240]\ntariff = \"cheap\"\n" + site_extra +
                             "[[node]]\nid = \"n1\"\nauth = \"plain\"\n"
                             "[[node.channel]]\nid = \"a\"\n"
                             "[[circuit]]\nid = \"range\"\nchannels = [\"n1/a\"]\n" + alerts;
    Result<Config> parsed = ParseConfig(text, dir.File("site.toml"));
    REQUIRE_MESSAGE(parsed.ok(), parsed.status().ToString());
    config = *parsed;
    Result<TariffSchedule> built = TariffSchedule::Create(config);
    REQUIRE(built.ok());
    schedule = std::move(built).value();
  }
  testing::TempDir dir;
  Config config;
  TariffSchedule schedule;
};

std::string CostBudget(const std::string& id, const std::string& period, double cost) {
  return "[[alert]]\nid = \"" + id + "\"\nkind = \"budget\"\ncircuits = [\"range\"]\n" +
         "budget_period = \"" + period + "\"\nbudget_cost = " + std::to_string(cost) + "\n";
}

// Constant `watts` on channel 0 in readings of `step_ms` from `from` to `to`, committed as
// they end; returns what happened.
std::vector<AlertOutcome> Constant(AlertEvaluator& evaluator, UnixMs from, UnixMs to,
                                   UnixMs step_ms, double watts) {
  std::vector<AlertOutcome> out;
  for (UnixMs end = from + step_ms; end <= to; end += step_ms) {
    ChannelReading reading = Reading(0, end, watts);
    reading.duration_ms = static_cast<std::int32_t>(step_ms);
    evaluator.OnReadings({reading}, end, &out);
  }
  return out;
}

TEST_SUITE("metering") {
  TEST_CASE("alert evaluator: cost budgets price each reading by the tariff of its day") {
    // The week of Monday 2026-03-02 (UTC); the dear tariff from Thursday 03-05. 1 kW all
    // week: Mon-Wed 72 kWh x 0.10 + Thu-Sun 96 kWh x 0.20 = 7.20 + 19.20 = 26.40 (by hand).
    PricedSite site("UTC", "[[site.tariff_change]]\nfrom = 2026-03-05\ntariff = \"dear\"\n",
                    CostBudget("exact", "week", 26.4) + CostBudget("tight", "week", 22));
    AlertEvaluator evaluator = AlertEvaluator::Create(site.config, &site.schedule).value();
    constexpr UnixMs kHour = 3'600'000;
    std::vector<AlertOutcome> out = Constant(evaluator, kT0, kT0 + 168 * kHour, kHour, 1000);
    // "exact" ends the week at exactly its budget: never over it, never projected over it
    // (the projection 168 x cost / hours gone stays below 26.40 until the last hour).
    CHECK(evaluator.slots()[0].state.cost == doctest::Approx(26.4));
    CHECK(evaluator.slots()[0].state.stage == 0);
    // "tight": cost after t hours (t > 72) is 0.2 t - 7.2, projected to (0.2 t - 7.2) x 168 / t;
    // above 22 from t > 104.3 h, spent beyond 22 from t > 146 h. At the cheap price alone
    // it would project 16.80 all week and never raise.
    REQUIRE(out.size() == 2);
    CHECK(out[0].rule == "tight");
    CHECK(out[0].transition.kind == AlertEventKind::kRaised);
    CHECK(out[0].transition.at_ms == kT0 + 105 * kHour);
    CHECK(out[0].transition.Value("used_cost") == doctest::Approx(0.2 * 105 - 7.2));
    CHECK(out[1].transition.kind == AlertEventKind::kChanged);
    CHECK(out[1].transition.at_ms == kT0 + 147 * kHour);
    // The next Monday's first reading closes the week.
    out = Constant(evaluator, kT0 + 168 * kHour, kT0 + 169 * kHour, kHour, 1000);
    REQUIRE(out.size() == 1);
    CHECK(out[0].rule == "tight");
    CHECK(out[0].transition.kind == AlertEventKind::kCleared);
    CHECK(out[0].transition.at_ms == kT0 + 168 * kHour);
    CHECK(out[0].transition.Value("used_cost") == doctest::Approx(26.4));
    CHECK(evaluator.slots()[0].state.cost == doctest::Approx(0.2));
  }

  TEST_CASE("alert evaluator: a daily cost budget over the 25-hour day of a DST change") {
    // IANA tz (tests/reference/data/tz/local-day-hours-2026.csv, from the machine's zdump):
    // in America/New_York, 2026-11-01 is 25 hours long, 04:00Z to 2026-11-02T05:00Z.
    const std::string row =
        "America/New_York,2026-11-01,dst_end,25,2026-11-01T04:00:00Z,2026-11-02T05:00:00Z";
    CHECK(testing::ReadFile(testing::ReferenceDir() / "tz" / "local-day-hours-2026.csv")
              .find(row) != std::string::npos);
    constexpr UnixMs kStart = 1'793'505'600'000;  // 2026-11-01T04:00:00Z
    constexpr UnixMs kHour = 3'600'000;
    constexpr UnixMs kQuarter = kHour / 4;
    // 1 kW at 0.10 a kWh costs 2.40 in 24 hours and 2.50 in this day.
    PricedSite site("America/New_York", "", CostBudget("daily", "day", 2.4));
    AlertEvaluator evaluator = AlertEvaluator::Create(site.config, &site.schedule).value();
    std::vector<AlertOutcome> out =
        Constant(evaluator, kStart - kQuarter, kStart + 25 * kHour + kQuarter, kQuarter, 1000);
    REQUIRE(out.size() == 3);
    // The day before: one reading, its own period, nothing to say. This day projects 2.50
    // from its first reading, raised once a tenth of the 25 hours (2.5 h) has passed.
    CHECK(out[0].transition.kind == AlertEventKind::kRaised);
    CHECK(out[0].transition.at_ms == kStart + 2 * kHour + 30 * 60'000);
    CHECK(out[0].transition.Value("projected_cost") == doctest::Approx(2.5));
    CHECK(out[0].transition.Value("period_end") == kStart + 25 * kHour);
    // Over 2.40 only in the 25th hour: a 24-hour day would have met the budget exactly.
    CHECK(out[1].transition.kind == AlertEventKind::kChanged);
    CHECK(out[1].transition.at_ms == kStart + 24 * kHour + kQuarter);
    // Cleared at local midnight of 11-02, by the first reading of that day.
    CHECK(out[2].transition.kind == AlertEventKind::kCleared);
    CHECK(out[2].transition.at_ms == kStart + 25 * kHour);
    CHECK(out[2].transition.Value("used_cost") == doctest::Approx(2.5));
    CHECK(out[2].transition.Value("used_kwh") == doctest::Approx(25));
  }

  TEST_CASE("alert evaluator: a budget period closes on its readings, the timer waits for quiet") {
    // 1 kW at 0.10 a kWh against a daily budget of 1.00: over it after 10 hours of a day.
    PricedSite site("UTC", "", CostBudget("daily", "day", 1));
    AlertEvaluator evaluator = AlertEvaluator::Create(site.config, &site.schedule).value();
    constexpr UnixMs kHour = 3'600'000;
    constexpr UnixMs kWall = kT0 + 30 * 24 * kHour;  // a month after the readings' day
    constexpr UnixMs kQuiet = AlertEvaluator::kBudgetQuietMs;
    // History replayed (or resent) a month late: the 2026-03-02 readings arrive in batches,
    // with timer ticks between them, as the daemon's writer thread interleaves them.
    std::vector<AlertOutcome> out;
    UnixMs wall = kWall;
    for (UnixMs end = kT0 + kHour; end <= kT0 + 25 * kHour; end += kHour, wall += 1000) {
      ChannelReading reading = Reading(0, end, 1000);
      reading.duration_ms = kHour;
      evaluator.OnReadings({reading}, wall, &out);
      evaluator.OnTick(wall + 500, &out);
      if (std::optional<UnixMs> deadline = evaluator.NextDeadline()) {
        CHECK(*deadline == wall + kQuiet);
      }
    }
    // Raised in its day, cleared by the next day's first reading with the whole day counted:
    // a timer acting on the wall clock would have closed the day at its first tick, with
    // about an hour counted and the rest dropped as late.
    REQUIRE(out.size() == 3);
    CHECK(out[0].transition.kind == AlertEventKind::kRaised);
    CHECK(out[1].transition.kind == AlertEventKind::kChanged);
    CHECK(out[1].transition.at_ms == kT0 + 11 * kHour);
    CHECK(out[2].transition.kind == AlertEventKind::kCleared);
    CHECK(out[2].transition.at_ms == kT0 + 24 * kHour);
    CHECK(out[2].transition.Value("used_kwh") == doctest::Approx(24));
    CHECK(out[2].transition.Value("used_cost") == doctest::Approx(2.4));

    // The next day goes over too, then its readings stop (the node fell silent): the timer
    // closes the day once the subject has been quiet kBudgetQuietMs after its last reading.
    out.clear();
    for (UnixMs end = kT0 + 26 * kHour; end <= kT0 + 36 * kHour; end += kHour, wall += 1000) {
      ChannelReading reading = Reading(0, end, 1000);
      reading.duration_ms = kHour;
      evaluator.OnReadings({reading}, wall, &out);
    }
    REQUIRE(out.size() == 2);
    const UnixMs last_fed = wall - 1000;
    CHECK(evaluator.NextDeadline() == last_fed + kQuiet);
    out.clear();
    evaluator.OnTick(last_fed + kQuiet - 1, &out);
    CHECK(out.empty());
    evaluator.OnTick(last_fed + kQuiet, &out);
    REQUIRE(out.size() == 1);
    CHECK(out[0].transition.kind == AlertEventKind::kCleared);
    CHECK(out[0].transition.at_ms == kT0 + 48 * kHour);  // the period's end, not the tick's
    CHECK(out[0].transition.Value("used_kwh") == doctest::Approx(12));
  }

  TEST_CASE("alert evaluator: a cost budget without a tariff schedule is refused") {
    PricedSite site("UTC", "", CostBudget("daily", "day", 2));
    Result<AlertEvaluator> unpriced = AlertEvaluator::Create(site.config);
    REQUIRE_FALSE(unpriced.ok());
    CHECK(unpriced.status().message() ==
          "alert \"daily\": budget_cost needs a site tariff to price energy");
  }

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
