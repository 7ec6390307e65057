// tests/metering/cycle_statements_test.cpp
// ComputeCycleStatements: a cycle under one tariff, a cycle cut by a tariff change (checked by
// hand arithmetic), and the unmetered remainder from main-meter reads.
#include "daemon/metering/cycle_statements.h"

#include <doctest/doctest.h>

#include "metering/bill_test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;
using testing::Cycle;
using testing::Load;
using testing::Zone;

UnixMs Utc(date::year_month_day day, int hour = 0) {
  return (date::sys_days{day}.time_since_epoch().count() * 24 + hour) * 3'600'000LL;
}

// Flat energy price, a fixed charge per cycle and optionally a two-block tier table.
TariffConfig Flat(const std::string& title, double per_kwh, double fixed_per_cycle,
                  bool tiers = false) {
  TariffConfig tariff;
  tariff.rates = testing::FlatRates(per_kwh);
  tariff.rates.name = title;
  tariff.fixed = {{"Customer charge", fixed_per_cycle, FixedPer::kCycle}};
  if (tiers) tariff.tiers = {{"all year", {{150, 0.02}, {0, 0.05}}}};
  return tariff;
}

// Two flats with a circuit each and a hall circuit shared equally; the remainder split equally.
Config Site(bool with_change) {
  Config config;
  config.site.name = "Test duplex";
  config.site.time_zone = "UTC";
  config.site.tariff = "old";
  config.tariffs = {{"old", "/lib/old.toml", Flat("Old rates", 0.10, 9.00, true)}};
  if (with_change) {
    config.site.tariff_changes = {{2026_y / 6 / 11, "new"}};
    config.tariffs.push_back({"new", "/lib/new.toml", Flat("New rates", 0.13, 12.00)});
  }
  for (const char* id : {"a-kitchen", "b-kitchen", "hall"}) {
    CircuitConfig circuit;
    circuit.id = id;
    config.circuits.push_back(circuit);
  }
  config.units = {{"a", "Flat A", {"a-kitchen"}}, {"b", "Flat B", {"b-kitchen"}}};
  config.shared = {{"hall", {ShareRule::kEqual, {}, {}}}};
  config.remainder = ShareConfig{ShareRule::kEqual, {}, {}};
  return config;
}

TariffSchedule Schedule(const Config& config) {
  Result<TariffSchedule> schedule = TariffSchedule::Create(config);
  REQUIRE_MESSAGE(schedule.ok(), schedule.status().ToString());
  return std::move(schedule).value();
}

// a-kitchen 0.25 kWh per 15 minutes (1 kW), b-kitchen and hall nothing.
std::vector<CircuitSeries> OneKilowatt(const BillingCycle& cycle) {
  return {{"a-kitchen", Load("a-kitchen", cycle, [](int) { return 0.25; }).buckets},
          {"b-kitchen", {}},
          {"hall", {}}};
}

Micros SumOfUnits(const CycleStatements& out) {
  Micros sum = 0;
  for (const UnitStatement& unit : out.units) {
    Micros lines = 0;
    for (const StatementLine& line : unit.lines) lines += line.amount;
    CHECK(lines == unit.total);
    sum += unit.total;
  }
  return sum;
}

TEST_SUITE("metering") {
  TEST_CASE("the schedule: the site's tariff until the first change, then each change") {
    Config config = Site(true);
    TariffSchedule schedule = Schedule(config);
    CHECK(schedule.InForce(2020_y / 1 / 1).name == "old");
    CHECK(schedule.InForce(2026_y / 6 / 10).name == "old");
    CHECK(schedule.InForce(2026_y / 6 / 11).name == "new");
    CHECK(schedule.InForce(2030_y / 1 / 1).name == "new");
    CHECK(TariffSchedule::Create(Site(false))->entries().size() == 1);
    Config none = Site(false);
    none.site.tariff.clear();
    CHECK(TariffSchedule::Create(none)->empty());
  }

  TEST_CASE("energy over any span is priced by the tariff of each bucket's date") {
    LocalTime zone = Zone("UTC");
    TariffSchedule schedule = Schedule(Site(true));
    // 10 June 23:00 to 11 June 01:00: four buckets of 0.5 kWh under each tariff.
    std::vector<BucketEnergy> buckets;
    for (int k = 0; k < 8; ++k) {
      buckets.push_back({Utc(2026_y / 6 / 10, 23) + k * kMsPerBucket, 0.5});
    }
    Result<std::vector<ScheduledCharges>> charges = schedule.PriceEnergy(zone, buckets);
    REQUIRE_MESSAGE(charges.ok(), charges.status().ToString());
    REQUIRE(charges->size() == 2);
    CHECK((*charges)[0].tariff->name == "old");
    REQUIRE((*charges)[0].lines.size() == 1);
    CHECK((*charges)[0].lines[0].kwh == doctest::Approx(2));
    CHECK((*charges)[0].lines[0].amount == doctest::Approx(0.20));  // 2 kWh x 0.10
    CHECK((*charges)[1].tariff->name == "new");
    CHECK((*charges)[1].lines[0].amount == doctest::Approx(0.26));  // 2 kWh x 0.13
  }

  TEST_CASE("a tariff error names the tariff file") {
    Config config = Site(false);
    config.tariffs[0].tariff.rates.seasons[0].last_day = date::December / 30;
    Result<TariffSchedule> schedule = TariffSchedule::Create(config);
    REQUIRE(!schedule.ok());
    CHECK(schedule.status().message() == "/lib/old.toml: 12-31 is in no season");
  }

  TEST_CASE("a cycle cut by a tariff change: each day at its own tariff, per-cycle charges "
            "prorated by days") {
    LocalTime zone = Zone("UTC");
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 6);  // 1 June to 1 July: 30 days
    Config config = Site(true);
    TariffSchedule schedule = Schedule(config);
    Result<std::vector<CyclePart>> parts = schedule.Split(zone, cycle);
    REQUIRE(parts.ok());
    REQUIRE(parts->size() == 2);
    CHECK((*parts)[0].span.range == TimeRange{Utc(2026_y / 6 / 1), Utc(2026_y / 6 / 11)});
    CHECK((*parts)[1].span.range == TimeRange{Utc(2026_y / 6 / 11), Utc(2026_y / 7 / 1)});

    Result<CycleStatements> result =
        ComputeCycleStatements(config, schedule, zone, cycle, OneKilowatt(cycle), {}, {});
    REQUIRE_MESSAGE(result.ok(), result.status().ToString());
    const CycleStatements& out = *result;
    // Hand computation, 1 kW all month:
    //  1-10 June (10 days, old): energy 240 kWh x 0.10 = 24.00; tier blocks prorated 10/30:
    //    first 150 x 10/30 = 50 kWh x 0.02 = 1.00, the other 190 kWh x 0.05 = 9.50;
    //    customer charge 9.00 x 10/30 = 3.00                         part total 37.50
    //  11-30 June (20 days, new): energy 480 kWh x 0.13 = 62.40; no tiers;
    //    customer charge 12.00 x 20/30 = 8.00                        part total 70.40
    //  cycle total 37.50 + 70.40 = 107.90
    CHECK(testing::Amounts(out.site) == std::vector<std::string>{
                                            "24.00", "1.00", "9.50", "3.00", "62.40", "8.00"});
    CHECK(out.site.total == 107'900'000);
    CHECK(out.site.days == 30);
    CHECK(out.site.lines[0].description == "Energy, all hours [2026-06-01 to 2026-06-10]");
    CHECK(out.site.lines[3].description ==
          "Customer charge, prorated 10 of 30 days [2026-06-01 to 2026-06-10]");
    CHECK(out.site.lines[3].quantity == doctest::Approx(1.0 / 3));
    CHECK(out.site.lines[4].description == "Energy, all hours [2026-06-11 to 2026-06-30]");
    REQUIRE(out.tariffs.size() == 2);
    CHECK(out.tariffs[0].name == "old");
    CHECK(out.tariffs[0].last_day == 2026_y / 6 / 10);
    CHECK(out.tariffs[1].title == "New rates");
    CHECK(out.tariffs[1].first_day == 2026_y / 6 / 11);
    CHECK(SumOfUnits(out) == out.site.total);
    // Flat A used all the energy; the customer charges are split equally: 1.50 + 4.00 each.
    REQUIRE(out.units.size() == 2);
    CHECK(out.units[0].total == (24'000'000 + 1'000'000 + 9'500'000 + 62'400'000) + 5'500'000);
    CHECK(out.units[1].total == 5'500'000);
  }

  TEST_CASE("a change on the cycle's first day does not cut it") {
    LocalTime zone = Zone("UTC");
    Config config = Site(true);
    config.site.tariff_changes[0].from = 2026_y / 6 / 1;
    TariffSchedule schedule = Schedule(config);
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 6);
    Result<CycleStatements> out =
        ComputeCycleStatements(config, schedule, zone, cycle, OneKilowatt(cycle), {}, {});
    REQUIRE(out.ok());
    // 720 kWh x 0.13 = 93.60, customer charge 12.00.
    CHECK(testing::Amounts(out->site) == std::vector<std::string>{"93.60", "12.00"});
    REQUIRE(out->tariffs.size() == 1);
    CHECK(out->tariffs[0].name == "new");
  }

  TEST_CASE("main-meter register reads give the remainder, split by the remainder rule") {
    LocalTime zone = Zone("UTC");
    Config config = Site(false);
    TariffSchedule schedule = Schedule(config);
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 6);
    // Reads half a day off each cycle bound: interpolated linearly in time (main_meter.h).
    // Register at 1 June 00:00 = 5000 + 24 / 2 = 5012; at 1 July 00:00 = 5812 + 12 / 2 = 5818;
    // the cycle's energy 806 kWh, the submeters 720 kWh, the remainder 86 kWh.
    std::vector<MainMeterRead> reads = {
        {1, MeterReadKind::kRegister, Utc(2026_y / 5 / 31, 12), 0, 5000, "typed in"},
        {2, MeterReadKind::kRegister, Utc(2026_y / 6 / 1, 12), 0, 5024, "typed in"},
        {3, MeterReadKind::kRegister, Utc(2026_y / 6 / 30, 12), 0, 5812, "typed in"},
        {4, MeterReadKind::kRegister, Utc(2026_y / 7 / 1, 12), 0, 5824, "typed in"}};
    Result<CycleStatements> result =
        ComputeCycleStatements(config, schedule, zone, cycle, OneKilowatt(cycle), reads, {});
    REQUIRE_MESSAGE(result.ok(), result.status().ToString());
    const CycleStatements& out = *result;
    REQUIRE(out.main_meter_kwh.has_value());
    CHECK(*out.main_meter_kwh == doctest::Approx(806));
    CHECK(out.remainder_kwh == doctest::Approx(86));
    CHECK(*out.submetered_ratio == doctest::Approx(720.0 / 806));
    CHECK(out.main_meter_basis == "main meter register reads");
    // Each flat's remainder line: 43 kWh. Energy 806 kWh x 0.10 = 80.60 in all.
    for (const UnitStatement& unit : out.units) {
      bool seen = false;
      for (const StatementLine& line : unit.lines) {
        if (line.section != StatementSection::kRemainder) continue;
        seen = true;
        CHECK(line.quantity == doctest::Approx(43));
        CHECK(line.method == "equal shares, 50%");
      }
      CHECK(seen);
    }
    CHECK(out.site.lines[0].quantity == doctest::Approx(806));
    CHECK(SumOfUnits(out) == out.site.total);
  }

  TEST_CASE("without reads covering the cycle no remainder is billed, and the basis says why") {
    LocalTime zone = Zone("UTC");
    Config config = Site(false);
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 6);
    std::vector<MainMeterRead> reads = {
        {1, MeterReadKind::kRegister, Utc(2026_y / 6 / 2), 0, 5000, "typed in"}};
    Result<CycleStatements> out = ComputeCycleStatements(config, Schedule(config), zone, cycle,
                                                         OneKilowatt(cycle), reads, {});
    REQUIRE(out.ok());
    CHECK(!out->main_meter_kwh);
    CHECK(out->remainder_kwh == 0);
    CHECK(out->main_meter_basis ==
          "no main meter reads cover 2026-06-01T00:00:00Z to 2026-07-01T00:00:00Z: need a "
          "register read at or before the start and one at or after the end, or period reads "
          "covering the whole span");
  }

  TEST_CASE("interval reads covering the cycle come before a typed-in period read") {
    LocalTime zone = Zone("UTC");
    Config config = Site(false);
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 6);
    // 720 hourly intervals of 1,120 Wh: 806.4 kWh; the submeters 720 kWh; remainder 86.4 kWh.
    std::vector<MeterInterval> intervals;
    for (UnixMs t = cycle.range.start_ms; t < cycle.range.end_ms; t += 3'600'000) {
      intervals.push_back({{t, t + 3'600'000}, 1120});
    }
    std::vector<MainMeterRead> reads = {
        {1, MeterReadKind::kPeriod, Utc(2026_y / 7 / 1), Utc(2026_y / 6 / 1), 900, "bill"}};
    Result<CycleStatements> out = ComputeCycleStatements(
        config, Schedule(config), zone, cycle, OneKilowatt(cycle), reads, {}, intervals);
    REQUIRE_MESSAGE(out.ok(), out.status().ToString());
    CHECK(*out->main_meter_kwh == doctest::Approx(806.4));
    CHECK(out->remainder_kwh == doctest::Approx(86.4));
    CHECK(out->main_meter_basis == "main meter interval reads");
    intervals.pop_back();  // the last hour missing: the period read answers instead
    out = ComputeCycleStatements(config, Schedule(config), zone, cycle, OneKilowatt(cycle), reads,
                                 {}, intervals);
    REQUIRE(out.ok());
    CHECK(*out->main_meter_kwh == doctest::Approx(900));
    CHECK(out->main_meter_basis == "main meter period reads");
  }

  TEST_CASE("a straddling cycle with main-meter reads: each part's meter energy") {
    LocalTime zone = Zone("UTC");
    Config config = Site(true);
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 6);
    // One utility-bill period read for the whole cycle: 900 kWh, spread evenly: 300 in the
    // first 10 days, 600 in the other 20. Remainders 300 - 240 = 60 and 600 - 480 = 120.
    std::vector<MainMeterRead> reads = {
        {1, MeterReadKind::kPeriod, Utc(2026_y / 7 / 1), Utc(2026_y / 6 / 1), 900, "bill"}};
    Result<CycleStatements> out = ComputeCycleStatements(config, Schedule(config), zone, cycle,
                                                         OneKilowatt(cycle), reads, {});
    REQUIRE_MESSAGE(out.ok(), out.status().ToString());
    CHECK(*out->main_meter_kwh == doctest::Approx(900));
    CHECK(out->remainder_kwh == doctest::Approx(180));
    CHECK(out->main_meter_basis == "main meter period reads");
    // Energy: 300 x 0.10 = 30.00 then 600 x 0.13 = 78.00.
    CHECK(out->site.lines[0].amount == 30'000'000);
    CHECK(SumOfUnits(*out) == out->site.total);
  }
}

}  // namespace
}  // namespace ampledger
