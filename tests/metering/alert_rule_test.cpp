// tests/metering/alert_rule_test.cpp
// Each alert kind on synthetic power series: exactly at the level, hold exactly met, inside
// the hysteresis band, a cycle with a short dip, silence and return, nights, budgets.
#include "daemon/metering/alert_rule.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

using date::operator""_y;

constexpr UnixMs kSecond = 1000;
constexpr UnixMs kHour = 3600 * kSecond;
// 2026-03-02T00:00:00Z, a Monday.
constexpr UnixMs kT0 = 1772409600000;

AlertSite Site(const std::string& zone = "UTC") {
  Result<LocalTime> local = LocalTime::ForZone(zone);
  REQUIRE(local.ok());
  return AlertSite{*local, 1, 300 * kSecond};
}

AlertRule Rule(const AlertRuleConfig& config, const AlertSite& site = Site()) {
  Result<AlertRule> rule = AlertRule::Create(config, site);
  REQUIRE(rule.ok());
  return *rule;
}

AlertRuleConfig Level(AlertKind kind, double level, double clear, double hold_s) {
  AlertRuleConfig config;
  config.id = "r";
  config.kind = kind;
  config.circuits = {"c"};
  config.level_watts = level;
  config.clear_watts = clear;
  config.hold_seconds = hold_s;
  return config;
}

// A 10-second sample ending `end_s` seconds after kT0, at `watts`.
PowerSample At(double end_s, double watts, int duration_s = 10) {
  PowerSample sample;
  sample.end_ms = kT0 + static_cast<UnixMs>(end_s * kSecond);
  sample.duration_ms = duration_s * 1000;
  sample.watts = watts;
  sample.energy_wh = watts * duration_s / 3600.0;
  return sample;
}

// Feeds `series` ({end_s, watts}) and returns the transitions.
std::vector<AlertTransition> Run(const AlertRule& rule, AlertState* state,
                                 std::vector<std::pair<double, double>> series) {
  std::vector<AlertTransition> out;
  for (auto [end_s, watts] : series) rule.OnSample(At(end_s, watts), state, &out);
  return out;
}

TEST_SUITE("metering") {
  TEST_CASE("power_above: exactly at the level does not raise; one watt above does") {
    AlertRule rule = Rule(Level(AlertKind::kPowerAbove, 3000, 1500, 0));
    AlertState state;
    CHECK(Run(rule, &state, {{10, 3000}, {20, 3000}}).empty());
    CHECK(state.phase == AlertPhase::kCalm);
    std::vector<AlertTransition> out = Run(rule, &state, {{30, 3001}});
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kRaised);
    CHECK(out[0].at_ms == kT0 + 30 * kSecond);
    CHECK(out[0].Value("watts") == 3001);
    CHECK(out[0].Value("held_s") == 10);
  }

  TEST_CASE("power_above: the hold is met exactly at hold_seconds, not a millisecond before") {
    AlertRule rule = Rule(Level(AlertKind::kPowerAbove, 3000, 1500, 60));
    AlertState state;
    // The condition begins at the start of the first sample over the level: t = 0.
    CHECK(Run(rule, &state, {{10, 3500}, {20, 3500}, {30, 3500}, {40, 3500}, {50, 3500}})
              .empty());
    CHECK(state.phase == AlertPhase::kHolding);
    CHECK(state.since_ms == kT0);
    std::vector<AlertTransition> out;
    PowerSample almost = At(60, 3600);
    almost.end_ms -= 1;  // held 59.999 s
    almost.duration_ms -= 1;
    rule.OnSample(almost, &state, &out);
    CHECK(out.empty());
    rule.OnSample(At(60.001, 3600, 0), &state, &out);  // held 60.001 s
    REQUIRE(out.size() == 1);
    CHECK(out[0].Value("held_s") == doctest::Approx(60.001));
    CHECK(out[0].Value("peak_watts") == 3600);

    AlertState exact;
    out = Run(rule, &exact, {{10, 3500}, {20, 3500}, {30, 3500}, {40, 3500}, {50, 3500},
                             {60, 3500}});
    REQUIRE(out.size() == 1);
    CHECK(out[0].Value("held_s") == 60);
  }

  TEST_CASE("power_above: a dip to the level restarts the hold") {
    AlertRule rule = Rule(Level(AlertKind::kPowerAbove, 3000, 1500, 30));
    AlertState state;
    CHECK(Run(rule, &state, {{10, 3500}, {20, 3500}, {30, 3000}, {40, 3500}, {50, 3500}})
              .empty());
    CHECK(state.since_ms == kT0 + 30 * kSecond);
    CHECK(Run(rule, &state, {{60, 3500}}).size() == 1);
  }

  TEST_CASE("power_above: inside the hysteresis band nothing changes, in either phase") {
    AlertRule rule = Rule(Level(AlertKind::kPowerAbove, 3000, 1500, 0));
    AlertState calm;
    CHECK(Run(rule, &calm, {{10, 2000}, {20, 1500}, {30, 2999}}).empty());
    AlertState raised;
    CHECK(Run(rule, &raised, {{10, 3200}}).size() == 1);
    // 1500 is the clear level itself: not below it, so still raised.
    CHECK(Run(rule, &raised, {{20, 2000}, {30, 1500}, {40, 2999}, {50, 3100}}).empty());
    CHECK(raised.phase == AlertPhase::kRaised);
    std::vector<AlertTransition> out = Run(rule, &raised, {{60, 1499}});
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kCleared);
    CHECK(out[0].Value("peak_watts") == 3200);
    CHECK(out[0].Value("lasted_s") == 60);
    CHECK(raised.phase == AlertPhase::kCalm);
    CHECK(Run(rule, &raised, {{70, 2999}}).empty());  // calm again: the band does not raise
  }

  TEST_CASE("power_above: a gap longer than max_gap restarts the hold") {
    AlertRule rule = Rule(Level(AlertKind::kPowerAbove, 100, 100, 60));
    AlertState state;
    CHECK(Run(rule, &state, {{10, 200}, {20, 200}}).empty());
    // Next sample starts 400 s after the last ended: more than the 300 s max_gap.
    CHECK(Run(rule, &state, {{430, 200}}).empty());
    CHECK(state.since_ms == kT0 + 420 * kSecond);
  }

  TEST_CASE("power_above: a resent older sample is ignored") {
    AlertRule rule = Rule(Level(AlertKind::kPowerAbove, 100, 100, 30));
    AlertState state;
    CHECK(Run(rule, &state, {{10, 200}, {20, 200}, {5, 0}, {20, 0}}).empty());
    CHECK(state.phase == AlertPhase::kHolding);
    CHECK(Run(rule, &state, {{30, 200}}).size() == 1);
  }

  TEST_CASE("power_below: mirrored levels, strict at both ends") {
    AlertRule rule = Rule(Level(AlertKind::kPowerBelow, 50, 80, 20));
    AlertState state;
    CHECK(Run(rule, &state, {{10, 50}, {20, 49}, {30, 10}}).size() == 1);  // held 20 s at t=30
    CHECK(state.phase == AlertPhase::kRaised);
    CHECK(Run(rule, &state, {{40, 80}, {50, 60}}).empty());  // in the band
    std::vector<AlertTransition> out = Run(rule, &state, {{60, 80.5}});
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kCleared);
    CHECK(out[0].Value("lowest_watts") == 10);
  }

  AlertRuleConfig Cycle() {
    AlertRuleConfig config = Level(AlertKind::kCycleDone, 400, 60, 0);
    config.quiet_seconds = 180;
    config.min_run_seconds = 600;
    return config;
  }

  TEST_CASE("cycle_done: a run, a short dip that does not end it, then quiet") {
    AlertRule rule = Rule(Cycle());
    AlertState state;
    std::vector<std::pair<double, double>> series = {{10, 5}};
    for (int s = 20; s <= 400; s += 10) series.push_back({s, 2000});  // run starts at 10 s
    for (int s = 410; s <= 500; s += 10) series.push_back({s, 20});   // 100 s dip < 180 s
    for (int s = 510; s <= 900; s += 10) series.push_back({s, 2000});
    CHECK(Run(rule, &state, series).empty());
    CHECK(state.phase == AlertPhase::kRunning);
    // Quiet from 900 s; the 180 s quiet time is met by the sample ending at 1080 s.
    std::vector<std::pair<double, double>> quiet;
    for (int s = 910; s < 1080; s += 10) quiet.push_back({s, 3});
    CHECK(Run(rule, &state, quiet).empty());
    CHECK(state.phase == AlertPhase::kQuieting);
    std::vector<AlertTransition> out = Run(rule, &state, {{1080, 3}});
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kCycleFinished);
    CHECK(out[0].at_ms == kT0 + 1080 * kSecond);
    CHECK(out[0].Value("start") == kT0 + 10 * kSecond);
    CHECK(out[0].Value("end") == kT0 + 900 * kSecond);
    CHECK(out[0].Value("duration_s") == 890);
    // 79 samples at 2000 W for 10 s and 10 at 20 W (the dip belongs to the run):
    // (79 x 2000 + 10 x 20) x 10 s / 3600 s/h.
    CHECK(out[0].Value("energy_wh") == doctest::Approx((79 * 2000.0 + 200) * 10 / 3600));
    CHECK(state.phase == AlertPhase::kCalm);
  }

  TEST_CASE("cycle_done: a run shorter than min_run ends silently; in the band is not quiet") {
    AlertRule rule = Rule(Cycle());
    AlertState state;
    std::vector<std::pair<double, double>> series;
    for (int s = 10; s <= 300; s += 10) series.push_back({s, 1000});
    series.push_back({310, 60});  // at the clear level: still running
    CHECK(Run(rule, &state, series).empty());
    CHECK(state.phase == AlertPhase::kRunning);
    series.clear();
    for (int s = 320; s <= 600; s += 10) series.push_back({s, 0});
    CHECK(Run(rule, &state, series).empty());  // 310 s run < 600 s
    CHECK(state.phase == AlertPhase::kCalm);
  }

  TEST_CASE("left_on: on for the limit raises; off clears") {
    AlertRuleConfig config = Level(AlertKind::kLeftOn, 500, 500, 3600);
    AlertRule rule = Rule(config);
    AlertState state;
    std::vector<std::pair<double, double>> series;
    for (int s = 10; s < 3600; s += 10) series.push_back({s, 1500});
    CHECK(Run(rule, &state, series).empty());
    // The first 10 s sample began at 0 s, so the limit is met by the sample ending at 3600 s.
    std::vector<AlertTransition> out = Run(rule, &state, {{3600, 1500}});
    REQUIRE(out.size() == 1);
    CHECK(out[0].reason == "on longer than the limit");
    CHECK(out[0].Value("on_for_s") == 3600);
    out = Run(rule, &state, {{3610, 500}});
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kCleared);
  }

  TEST_CASE("left_on: on at all inside a window that crosses midnight, in local time") {
    AlertRuleConfig config = Level(AlertKind::kLeftOn, 100, 100, 0);
    config.window_start = "23:30";
    config.window_end = "05:00";
    // America/Chicago is UTC-6 in March before the DST change (IANA tz data on this machine):
    // kT0 (00:00Z Monday) is 18:00 local on Sunday.
    AlertRule rule = Rule(config, Site("America/Chicago"));
    AlertState state;
    CHECK(Run(rule, &state, {{5.4 * 3600, 300}}).empty());  // 23:24 local
    std::vector<AlertTransition> out = Run(rule, &state, {{5.5 * 3600 + 10, 300}});  // 23:30:10
    REQUIRE(out.size() == 1);
    CHECK(out[0].reason == "on inside the window");
    AlertState morning;
    CHECK(Run(rule, &morning, {{11 * 3600 + 10, 300}}).empty());  // 05:00:10 local: outside
  }

  TEST_CASE("left_on: the window follows the local clock across a DST change") {
    AlertRuleConfig config = Level(AlertKind::kLeftOn, 100, 100, 0);
    config.window_start = "02:30";
    config.window_end = "03:30";
    // US DST began 2026-03-08 at 02:00 CST -> 03:00 CDT (IANA tz data, America/Chicago rule
    // "Mar Sun>=8"): 08:00Z is 02:00 CST (before) and 08:45Z is 03:45 CDT.
    AlertRule rule = Rule(config, Site("America/Chicago"));
    const UnixMs dst_day = kT0 + 6 * 24 * kHour;  // 2026-03-08T00:00Z
    AlertState state;
    std::vector<AlertTransition> out;
    PowerSample sample;
    sample.duration_ms = 10 * kSecond;
    sample.watts = 300;
    sample.end_ms = dst_day + 8 * kHour + 40 * 60 * kSecond;  // 03:40 CDT: outside
    rule.OnSample(sample, &state, &out);
    CHECK(out.empty());
    sample.end_ms = dst_day + 8 * kHour + 25 * 60 * kSecond;  // 03:25 CDT, but older: ignored
    rule.OnSample(sample, &state, &out);
    CHECK(out.empty());
    AlertState fresh;
    rule.OnSample(sample, &fresh, &out);  // 03:25 CDT: inside
    CHECK(out.size() == 1);
  }

  TEST_CASE("node_silent: silent after strictly more than N intervals, then back") {
    AlertRuleConfig config;
    config.id = "quiet";
    config.kind = AlertKind::kNodeSilent;
    config.missed_intervals = 3;
    AlertRule rule = Rule(config);
    AlertState state;
    std::vector<AlertTransition> out;
    rule.OnTick(kT0, &state, &out);  // never heard: nothing to say
    CHECK(out.empty());
    CHECK_FALSE(rule.NextDeadline(state).has_value());
    rule.OnHeard(kT0, 10 * kSecond, &state, &out);
    CHECK(rule.NextDeadline(state) == kT0 + 30 * kSecond + 1);
    rule.OnTick(kT0 + 30 * kSecond, &state, &out);  // exactly three intervals: not yet
    CHECK(out.empty());
    rule.OnTick(kT0 + 30 * kSecond + 1, &state, &out);
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kSilent);
    CHECK(out[0].Value("last_heard") == kT0);
    rule.OnTick(kT0 + 90 * kSecond, &state, &out);  // once only
    CHECK(out.size() == 1);
    rule.OnHeard(kT0 + 100 * kSecond, 0, &state, &out);
    REQUIRE(out.size() == 2);
    CHECK(out[1].kind == AlertEventKind::kBack);
    CHECK(out[1].Value("silent_for_s") == 100);
    CHECK(state.interval_ms == 10 * kSecond);  // 0 kept the known interval
  }

  TEST_CASE("standby_creep: raised after N nights above, cleared by a night at or below") {
    AlertRuleConfig config = Level(AlertKind::kStandbyCreep, 150, 150, 0);
    config.nights = 2;
    AlertRule rule = Rule(config);  // UTC: the night window is 01:00-05:00Z
    AlertState state;
    std::vector<AlertTransition> out;
    auto night = [&](int day, double minimum) {
      for (int hour = 0; hour < 24; ++hour) {
        PowerSample sample;
        sample.end_ms = kT0 + day * 24 * kHour + hour * kHour + 30 * 60 * kSecond;
        sample.duration_ms = 10 * kSecond;
        sample.watts = hour == 3 ? minimum : 400;
        rule.OnSample(sample, &state, &out);
      }
    };
    night(0, 180);
    CHECK(out.empty());  // one night: not yet
    CHECK(state.count == 1);
    night(1, 200);
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kRaised);
    CHECK(out[0].Value("night_min_watts") == 200);
    // Judged by the first sample at or after 05:00 on day 1.
    CHECK(out[0].at_ms == kT0 + 24 * kHour + 5 * kHour + 30 * 60 * kSecond);
    night(2, 300);
    CHECK(out.size() == 1);  // still raised: no new event
    night(3, 150);           // exactly at the level is not above it
    REQUIRE(out.size() == 2);
    CHECK(out[1].kind == AlertEventKind::kCleared);
    CHECK(state.count == 0);
  }

  AlertRuleConfig Budget(const std::string& period, double kwh) {
    AlertRuleConfig config;
    config.id = "b";
    config.kind = AlertKind::kBudget;
    config.circuits = {"c"};
    config.budget_kwh = kwh;
    config.budget_period = period;
    return config;
  }

  // One hour at `watts` ending `end_h` hours after kT0.
  PowerSample Hour(double end_h, double watts) {
    PowerSample sample;
    sample.end_ms = kT0 + static_cast<UnixMs>(end_h * kHour);
    sample.duration_ms = static_cast<std::int32_t>(kHour);
    sample.watts = watts;
    sample.energy_wh = watts;  // 1 W for 1 h is 1 Wh (SI: 1 Wh = 3600 J)
    return sample;
  }

  TEST_CASE("budget: projected before it is spent, then exceeded, cleared at the period end") {
    AlertRule rule = Rule(Budget("day", 10));
    AlertState state;
    std::vector<AlertTransition> out;
    rule.OnSample(Hour(1, 2000), &state, &out);  // 1/24 of the day: too early to project
    CHECK(out.empty());
    rule.OnSample(Hour(2, 0), &state, &out);
    rule.OnSample(Hour(3, 0), &state, &out);  // 2 kWh in 3 h -> 16 kWh projected
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kRaised);
    CHECK(out[0].reason == "on course to exceed");
    CHECK(out[0].Value("used_kwh") == doctest::Approx(2));
    CHECK(out[0].Value("projected_kwh") == doctest::Approx(16));
    rule.OnSample(Hour(4, 8000), &state, &out);  // 10 kWh: at the budget, not over it
    CHECK(out.size() == 1);
    rule.OnSample(Hour(5, 1), &state, &out);
    REQUIRE(out.size() == 2);
    CHECK(out[1].kind == AlertEventKind::kChanged);
    CHECK(out[1].reason == "budget exceeded");
    rule.OnSample(Hour(6, 5000), &state, &out);  // worse, but already exceeded
    CHECK(out.size() == 2);
    CHECK(rule.NextDeadline(state) == kT0 + 24 * kHour);
    rule.OnTick(kT0 + 24 * kHour - 1, &state, &out);
    CHECK(out.size() == 2);
    rule.OnTick(kT0 + 24 * kHour, &state, &out);
    REQUIRE(out.size() == 3);
    CHECK(out[2].kind == AlertEventKind::kCleared);
    CHECK(out[2].Value("used_kwh") == doctest::Approx(15.001));
    rule.OnSample(Hour(23.5, 9000), &state, &out);  // late energy of the ended day: not counted
    CHECK(state.energy_wh == 0);
    rule.OnSample(Hour(25, 500), &state, &out);
    CHECK(state.energy_wh == 500);
    CHECK(out.size() == 3);
  }

  TEST_CASE("budget: a sample in the next period starts a new count and clears") {
    AlertRule rule = Rule(Budget("day", 1));
    AlertState state;
    std::vector<AlertTransition> out;
    rule.OnSample(Hour(5, 2000), &state, &out);
    REQUIRE(out.size() == 1);
    CHECK(out[0].reason == "budget exceeded");  // straight to exceeded: one event
    rule.OnSample(Hour(25, 10), &state, &out);
    REQUIRE(out.size() == 2);
    CHECK(out[1].kind == AlertEventKind::kCleared);
    CHECK(out[1].at_ms == kT0 + 24 * kHour);
    CHECK(state.energy_wh == 10);
  }

  TEST_CASE("budget periods: ISO 8601 weeks start on Monday; cycles on the billing day") {
    // ISO 8601-1:2019 section 3.1.1.23 (calendar week): weeks begin on Monday.
    AlertRule weekly = Rule(Budget("week", 10), Site("Europe/Paris"));
    // 2026-03-04 (Wednesday) 12:00Z. Paris is UTC+1 in March before the change on 03-29.
    Result<TimeRange> week = weekly.BudgetPeriod(kT0 + 2 * 24 * kHour + 12 * kHour);
    REQUIRE(week.ok());
    CHECK(week->start_ms == kT0 - kHour);  // Monday 2026-03-02 00:00 CET
    CHECK(week->DurationMs() == 7 * 24 * kHour);
    // The week of the EU DST change (Sunday 2026-03-29, IANA rule EU "Mar lastSun 1:00u") is
    // one hour short.
    Result<TimeRange> dst_week = weekly.BudgetPeriod(kT0 + 25 * 24 * kHour);
    REQUIRE(dst_week.ok());
    CHECK(dst_week->DurationMs() == 7 * 24 * kHour - kHour);
    AlertSite site = Site("UTC");
    site.billing_cycle_day = 15;
    AlertRule cycle = Rule(Budget("cycle", 10), site);
    Result<TimeRange> range = cycle.BudgetPeriod(kT0);
    REQUIRE(range.ok());
    CHECK(range->start_ms == kT0 - 15 * 24 * kHour);  // 2026-02-15
    CHECK(range->end_ms == kT0 + 13 * 24 * kHour);    // 2026-03-15
  }

  AlertRuleConfig CostBudget(const std::string& period, double cost) {
    AlertRuleConfig config = Budget(period, 0);
    config.budget_cost = cost;
    return config;
  }

  AlertSite PricedSite(const std::string& zone = "UTC") {
    AlertSite site = Site(zone);
    site.priced = true;
    return site;
  }

  // One hour at `watts` ending `end_h` hours after kT0, costing `cost`.
  PowerSample PricedHour(double end_h, double watts, double cost) {
    PowerSample sample = Hour(end_h, watts);
    sample.cost = cost;
    return sample;
  }

  TEST_CASE("budget_cost: refused on a site whose samples are not priced") {
    Result<AlertRule> rule = AlertRule::Create(CostBudget("day", 5), Site());
    REQUIRE_FALSE(rule.ok());
    CHECK(rule.status().message() == "alert \"b\": budget_cost needs a site tariff to price energy");
    CHECK(AlertRule::Create(CostBudget("day", 5), PricedSite()).ok());
  }

  TEST_CASE("budget_cost: spent exactly the budget is not over it; a micro-unit more is") {
    AlertRule rule = Rule(CostBudget("day", 3.3), PricedSite());
    AlertState state;
    std::vector<AlertTransition> out;
    // 1.1 + 2.2 is 3.3000000000000003 in binary floating point: still exactly the budget.
    rule.OnSample(PricedHour(21, 1100, 1.1), &state, &out);
    rule.OnSample(PricedHour(22, 2200, 2.2), &state, &out);
    CHECK(state.cost > 3.3);
    // The projection (over 22 of 24 hours) is above the budget: on course, not exceeded.
    REQUIRE(out.size() == 1);
    CHECK(out[0].reason == "on course to exceed");
    CHECK(out[0].Value("used_cost") == doctest::Approx(3.3));
    CHECK(out[0].Value("budget_cost") == 3.3);
    CHECK(out[0].Value("projected_cost") == doctest::Approx(3.3 * 24 / 22));
    CHECK(out[0].Value("used_kwh") == doctest::Approx(3.3));
    CHECK_FALSE(out[0].Value("budget_kwh"));
    rule.OnSample(PricedHour(23.5, 0, 0.000001), &state, &out);
    REQUIRE(out.size() == 2);
    CHECK(out[1].kind == AlertEventKind::kChanged);
    CHECK(out[1].reason == "budget exceeded");
    rule.OnTick(kT0 + 24 * kHour, &state, &out);
    REQUIRE(out.size() == 3);
    CHECK(out[2].kind == AlertEventKind::kCleared);
    CHECK(out[2].Value("used_cost") == doctest::Approx(3.300001));
    CHECK(out[2].Value("budget_cost") == 3.3);
    CHECK(out[2].Value("period_end") == kT0 + 24 * kHour);
  }

  TEST_CASE("budget_cost: raised when the projection crosses the budget, not when it meets it") {
    AlertRule rule = Rule(CostBudget("day", 4.8), PricedSite());
    AlertState state;
    std::vector<AlertTransition> out;
    // 0.2 an hour projects exactly 4.8 for the day: on budget, nothing to say.
    for (int h = 1; h <= 6; ++h) rule.OnSample(PricedHour(h, 1000, 0.2), &state, &out);
    CHECK(out.empty());
    // Dearer hours: 1.2 + 0.5 = 1.7 after 7 h projects 1.7 x 24 / 7 = 5.83 > 4.8.
    rule.OnSample(PricedHour(7, 1000, 0.5), &state, &out);
    REQUIRE(out.size() == 1);
    CHECK(out[0].kind == AlertEventKind::kRaised);
    CHECK(out[0].at_ms == kT0 + 7 * kHour);
    CHECK(out[0].Value("projected_cost") == doctest::Approx(1.7 * 24 / 7));
    // A cheap night after does not clear it: within a period a budget only gets worse.
    rule.OnSample(PricedHour(20, 0, 0), &state, &out);
    CHECK(out.size() == 1);
    CHECK(state.stage == 1);
  }

  TEST_CASE("budget_cost: a new period starts a new count of money and energy") {
    AlertRule rule = Rule(CostBudget("week", 1), PricedSite());
    AlertState state;
    std::vector<AlertTransition> out;
    rule.OnSample(PricedHour(1, 500, 2), &state, &out);  // Monday 2026-03-02: exceeded at once
    REQUIRE(out.size() == 1);
    CHECK(out[0].reason == "budget exceeded");
    rule.OnSample(PricedHour(7 * 24 + 1, 100, 0.25), &state, &out);  // the next Monday
    REQUIRE(out.size() == 2);
    CHECK(out[1].kind == AlertEventKind::kCleared);
    CHECK(out[1].at_ms == kT0 + 7 * 24 * kHour);
    CHECK(out[1].Value("used_cost") == 2);
    CHECK(state.cost == 0.25);
    CHECK(state.energy_wh == 100);
  }

  TEST_CASE("cycle_done: the finished cycle carries its cost on a priced site") {
    AlertRule priced = Rule(Cycle(), PricedSite());
    AlertRule unpriced = Rule(Cycle());
    AlertState priced_state;
    AlertState unpriced_state;
    std::vector<AlertTransition> priced_out;
    std::vector<AlertTransition> unpriced_out;
    auto feed = [&](double end_s, double watts, double cost) {
      PowerSample sample = At(end_s, watts);
      sample.cost = cost;
      priced.OnSample(sample, &priced_state, &priced_out);
      unpriced.OnSample(sample, &unpriced_state, &unpriced_out);
    };
    for (int s = 10; s <= 600; s += 10) feed(s, 3000, 0.01);  // 60 samples running
    for (int s = 610; s <= 650; s += 10) feed(s, 10, 0.001);  // a 50 s dip, part of the run
    for (int s = 660; s <= 700; s += 10) feed(s, 3000, 0.01);
    for (int s = 710; s <= 890; s += 10) feed(s, 2, 0.0001);  // 180 s quiet: not the run's
    REQUIRE(priced_out.size() == 1);
    CHECK(priced_out[0].Value("cost") == doctest::Approx(65 * 0.01 + 5 * 0.001));
    CHECK(priced_out[0].Value("duration_s") == 700);
    REQUIRE(unpriced_out.size() == 1);
    CHECK_FALSE(unpriced_out[0].Value("cost"));
    CHECK(unpriced_out[0].Value("energy_wh") == priced_out[0].Value("energy_wh"));
  }
}

}  // namespace
}  // namespace ampledger
