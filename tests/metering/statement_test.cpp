// tests/metering/statement_test.cpp
#include "daemon/metering/statement.h"

#include <doctest/doctest.h>

#include "metering/bill_test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;
using testing::Cycle;
using testing::Load;
using testing::MakeTariff;
using testing::Zone;

// Two flats, a shared laundry, solar; the circuits' ids match the loads below.
Config Building(ShareRule laundry_rule) {
  Config config;
  for (const char* id : {"upper-kitchen", "lower-kitchen", "laundry", "hall", "solar"}) {
    CircuitConfig circuit;
    circuit.id = id;
    if (std::string(id) == "solar") circuit.direction = Direction::kExport;
    config.circuits.push_back(circuit);
  }
  config.units = {{"upper", "Upper flat", {"upper-kitchen"}}, {"lower", "Lower flat", {"lower-kitchen"}}};
  ShareConfig laundry{laundry_rule, {}, {}};
  if (laundry_rule == ShareRule::kFixed) {
    laundry.units = {"upper", "lower"};
    laundry.weights = {70, 30};
  }
  config.shared = {{"laundry", laundry}};
  config.remainder = ShareConfig{ShareRule::kEqual, {}, {}};
  return config;
}

CircuitSeries Series(const std::string& id, const BillingCycle& cycle,
                     const std::function<double(int)>& kwh) {
  return {id, Load(id, cycle, kwh).buckets};
}

Micros Sum(const CycleStatements& statements) {
  Micros sum = 0;
  for (const UnitStatement& statement : statements.units) {
    Micros lines = 0;
    for (const StatementLine& line : statement.lines) lines += line.amount;
    CHECK(lines == statement.total);
    sum += statement.total;
  }
  return sum;
}

TEST_SUITE("metering") {
  TEST_CASE("own, shared, remainder and common lines; statements add up to the site bill") {
    LocalTime zone = Zone("America/Chicago");
    BillingCycle cycle = Cycle(zone, 5, 2026_y / 3);  // holds the 8 March DST change
    TariffConfig tariff;
    tariff.rates = testing::FlatRates(0.12);
    tariff.fixed = {{"Customer charge", 10.01, FixedPer::kCycle}};
    tariff.adjustments = {{"Tax", 7.25}};
    std::vector<CircuitSeries> circuits = {
        Series("upper-kitchen", cycle, [](int) { return 0.1; }),
        Series("lower-kitchen", cycle, [](int) { return 0.3; }),
        Series("laundry", cycle, [](int k) { return k % 96 == 40 ? 1.0 : 0.0; }),
        Series("hall", cycle, [](int) { return 0.01; })};
    CycleReads reads;
    reads.main_meter_kwh = 1500;
    Result<CycleStatements> result =
        ComputeStatements(Building(ShareRule::kFixed), MakeTariff(tariff), zone, cycle, circuits, reads);
    REQUIRE_MESSAGE(result.ok(), result.status().ToString());
    const CycleStatements& out = *result;
    CHECK(Sum(out) == out.site.total);
    REQUIRE(out.units.size() == 3);  // the hall belongs to nobody: the owner's part
    CHECK(out.units[2].unit_id.empty());
    CHECK(out.submetered_ratio.has_value());
    // 31-day cycle with a 23-hour day: 743 h x (0.4 + 0.04) + 31 laundry kWh.
    CHECK(out.submetered_import_kwh == doctest::Approx(743 * 4 * 0.41 + 31));
    CHECK(out.remainder_kwh == doctest::Approx(1500 - out.submetered_import_kwh));
    const UnitStatement& upper = out.units[0];
    bool shared_seen = false, remainder_seen = false, fixed_seen = false;
    for (const StatementLine& line : upper.lines) {
      if (line.section == StatementSection::kShared) {
        shared_seen = true;
        CHECK(line.method == "fixed shares, 70%");
        CHECK(line.quantity == doctest::Approx(31 * 0.7));
      }
      if (line.section == StatementSection::kRemainder) {
        remainder_seen = true;
        CHECK(line.method == "equal shares, 50%");
      }
      if (line.description == "Customer charge") {
        fixed_seen = true;
        CHECK(FormatCents(line.amount) == "5.01");  // 10.01 split, the first unit's cent
      }
    }
    CHECK((shared_seen && remainder_seen && fixed_seen));
    CHECK(std::string(out.notice).find("regulated") != std::string::npos);
  }

  // Properties over seeded random loads, rules and rounding (bounded: 20 rounds).
  TEST_CASE("random loads: statements add up to the site bill; only credits are negative") {
    std::uint64_t state = 77;
    auto next = [&] {
      state = state * 6364136223846793005ULL + 1442695040888963407ULL;
      return static_cast<double>(state >> 40) / static_cast<double>(1ULL << 24);
    };
    LocalTime zone = Zone("America/Chicago");
    BillingCycle cycle = Cycle(zone, 28, 2026_y / 10);  // holds 1 November
    for (int round = 0; round < 20; ++round) {
      TariffConfig tariff;
      tariff.rates = {"tou", {{"all year", date::January / 1, date::December / 31,
                               {{"peak", std::round(next() * 4e5) / 1e6}, {"base", 0.08}},
                               {{"peak", 16 * 60, 21 * 60 + 30}}, "base", std::nullopt}}, {}};
      tariff.tiers = {{"all year", {{100 + std::round(next() * 400), 0.01}, {0, 0.03}}}};
      tariff.fixed = {{"Fixed", std::round(next() * 3e7) / 1e6, FixedPer::kDay}};
      DemandCharge demand;
      demand.name = "Demand";
      demand.per_kw = 2.5;
      tariff.demand = {demand};
      tariff.adjustments = {{"Rebate", -std::round(next() * 100) / 10}, {"Tax", 8.875}};
      tariff.export_rule = {ExportMethod::kNetBilling, Netting::kInterval, 0.04};
      tariff.rounding.each_line = round % 3 != 0;
      ShareRule rule = static_cast<ShareRule>(round % 3);
      std::vector<CircuitSeries> circuits;
      for (const char* id : {"upper-kitchen", "lower-kitchen", "laundry", "hall"}) {
        double scale = next();
        circuits.push_back(Series(id, cycle, [&, scale](int) { return next() * scale; }));
      }
      circuits.push_back(Series("solar", cycle, [&](int k) {
        return k % 96 > 44 && k % 96 < 60 ? next() : 0.0; }));
      CycleReads reads;
      if (round % 2 == 0) reads.main_meter_kwh = 2500;
      Result<CycleStatements> result = ComputeStatements(Building(rule), MakeTariff(tariff),
                                                         zone, cycle, circuits, reads);
      REQUIRE_MESSAGE(result.ok(), result.status().ToString());
      CHECK(Sum(*result) == result->site.total);
      for (const BillLine& line : result->site.lines) {
        if (!line.IsCredit()) CHECK(line.amount >= 0);
      }
      for (const UnitStatement& statement : result->units) {
        for (const StatementLine& line : statement.lines) {
          bool credit = line.description.rfind("Rebate", 0) == 0 ||
                        line.description == "Export credit" ||
                        line.description == "Rounding to the cent";
          if (!credit) CHECK_MESSAGE(line.amount >= 0, line.description);
        }
      }
    }
  }

  TEST_CASE("a series of an unknown circuit is refused") {
    LocalTime zone = Zone("UTC");
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 4);
    TariffConfig tariff;
    tariff.rates = testing::FlatRates(0.1);
    Result<CycleStatements> result = ComputeStatements(
        Building(ShareRule::kEqual), MakeTariff(tariff), zone, cycle, {{"garage", {}}}, {});
    REQUIRE_FALSE(result.ok());
    CHECK(result.status().message() == "no circuit \"garage\" in the config");
  }
}

}  // namespace
}  // namespace ampledger
