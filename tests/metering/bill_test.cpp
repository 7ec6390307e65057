// tests/metering/bill_test.cpp
// Bill rules checked with small hand computations (hand, ours) and seeded random properties.
#include "daemon/metering/bill.h"

#include <doctest/doctest.h>

#include "metering/bill_test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;
using testing::Amounts;
using testing::Cycle;
using testing::Load;
using testing::MakeBill;
using testing::MakeTariff;
using testing::Zone;
using Strings = std::vector<std::string>;

constexpr unsigned kWeekdays = DayKindBit(DayKind::kWeekday);

// peak 16:00-21:00 every day at 0.30, base 0.10.
TariffConfig PeakTariff() {
  TariffConfig config;
  config.rates = {"peak", {{"all year", date::January / 1, date::December / 31,
                            {{"peak", 0.30}, {"base", 0.10}},
                            {{"peak", 16 * 60, 21 * 60}}, "base", std::nullopt}}, {}};
  return config;
}

TEST_SUITE("metering") {
  TEST_CASE("net billing: imports at retail, exports at the export price (hand, ours)") {
    LocalTime zone = Zone("UTC");
    TariffConfig config = PeakTariff();
    config.export_rule = {ExportMethod::kNetBilling, Netting::kInterval, 0.05};
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 4);  // 30 days
    // 1 kW load all day; 3 kW solar 10:00-14:00 (2 kW export for 4 h a day).
    LoadSeries load = Load("house", cycle, [](int) { return 0.25; });
    LoadSeries solar = Load("solar", cycle, [](int k) {
      return k % 96 >= 40 && k % 96 < 56 ? 0.75 : 0.0; }, 1, true);
    Bill bill = MakeBill(MakeTariff(config), zone, {cycle, {load, solar}, {}, 0, 0});
    // Per day: peak 5 kWh x 0.30, base 15 kWh x 0.10 (the 4 solar hours import nothing),
    // export 8 kWh x 0.05; 30 days: 45.00 + 45.00 - 12.00.
    CHECK(Amounts(bill) == Strings{"45.00", "45.00", "-12.00"});
    CHECK(bill.export_kwh == doctest::Approx(240));
    CHECK(FormatCents(bill.total) == "78.00");
  }

  TEST_CASE("net metering per period, per cycle, banked kWh (hand, ours)") {
    LocalTime zone = Zone("UTC");
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 4);
    LoadSeries load = Load("house", cycle, [](int) { return 0.25; });
    LoadSeries solar = Load("solar", cycle, [](int k) {
      return k % 96 >= 40 && k % 96 < 56 ? 0.75 : 0.0; }, 1, true);
    TariffConfig config = PeakTariff();
    config.export_rule = {ExportMethod::kNetMetering, Netting::kInterval, 0};
    Bill interval = MakeBill(MakeTariff(config), zone, {cycle, {load, solar}, {}, 0, 0});
    CHECK(Amounts(interval) == Strings{"45.00", "45.00"});
    CHECK(interval.banked_kwh_out == doctest::Approx(240));

    // Per period: base imports 450 kWh, exports 240 kWh -> 210 kWh billed.
    config.export_rule.netting = Netting::kPeriod;
    Bill period = MakeBill(MakeTariff(config), zone, {cycle, {load, solar}, {}, 0, 0});
    CHECK(Amounts(period) == Strings{"45.00", "21.00"});
    CHECK(period.banked_kwh_out == doctest::Approx(0));

    // Per cycle: 600 - 240 = 360 kWh, spread over the periods in proportion (150:450).
    config.export_rule.netting = Netting::kCycle;
    Bill whole = MakeBill(MakeTariff(config), zone, {cycle, {load, solar}, {}, 0, 0});
    CHECK(Amounts(whole) == Strings{"27.00", "27.00"});

    // 600 banked kWh carried in pay for everything but the surplus is banked again.
    Bill banked = MakeBill(MakeTariff(config), zone, {cycle, {load, solar}, {}, 600, 0});
    CHECK(banked.billed_kwh == doctest::Approx(0));
    CHECK(banked.banked_kwh_out == doctest::Approx(240));
  }

  TEST_CASE("a money credit is carried in and a surplus carried out") {
    LocalTime zone = Zone("UTC");
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 4);
    TariffConfig config = PeakTariff();
    Bill bill = MakeBill(MakeTariff(config), zone,
                         {cycle, {Load("house", cycle, [](int) { return 0.25; })}, {}, 0,
                          110'000'000});
    CHECK(Amounts(bill) == Strings{"45.00", "57.00", "-102.00"});
    CHECK(bill.total == 0);
    CHECK(FormatCents(bill.credit_carried_out) == "8.00");

    config.export_rule = {ExportMethod::kNetBilling, Netting::kInterval, 0.50};
    LoadSeries solar = Load("solar", cycle, [](int k) {
      return k % 96 >= 40 && k % 96 < 56 ? 0.75 : 0.0; }, 1, true);
    Bill surplus = MakeBill(MakeTariff(config), zone,
                            {cycle, {Load("house", cycle, [](int) { return 0.25; }), solar},
                             {}, 0, 0});
    // 45 + 45 - 240 x 0.50 = -30: carried forward, the bill is 0.
    CHECK(Amounts(surplus) == Strings{"45.00", "45.00", "-120.00", "30.00"});
    CHECK(surplus.total == 0);
    CHECK(FormatCents(surplus.credit_carried_out) == "30.00");
  }

  TEST_CASE("demand: window, 30-minute interval, ratchet and minimum (hand, ours)") {
    LocalTime zone = Zone("UTC");
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 4);  // Wednesday 1 April 2026
    // 2 kW base; 10 kW in one 15-minute bucket at 12:00 on Thursday 2 April; 6 kW for an hour
    // at 20:00 on Friday 3 April.
    LoadSeries load = Load("shop", cycle, [](int k) {
      if (k == 96 + 48) return 2.5;
      if (k >= 192 + 80 && k < 192 + 84) return 1.5;
      return 0.5;
    });
    TariffConfig config = PeakTariff();
    auto charge = [](const char* name, double per_kw, int minutes) {
      DemandCharge demand;
      demand.name = name;
      demand.per_kw = per_kw;
      demand.interval_minutes = minutes;
      return demand;
    };
    DemandCharge any = charge("Demand", 10, 30);
    DemandCharge evening = charge("Evening demand", 5, 15);
    evening.window = RateWindow{"", 18 * 60, 22 * 60, kWeekdays};
    DemandCharge ratchet = charge("Ratchet demand", 1, 15);
    ratchet.ratchet_percent = 80;
    ratchet.ratchet_cycles = 2;
    DemandCharge minimum = charge("Minimum demand", 1, 60);
    minimum.minimum_kw = 7;
    config.demand = {any, evening, ratchet, minimum};
    Bill bill = MakeBill(MakeTariff(config), zone, {cycle, {load}, {{}, {}, {9, 20, 30}, {}},
                                                    0, 0});
    // 30-minute mean at 12:00: (2.5 + 0.5) kWh / 0.5 h = 6 kW, the same as 20:00.
    CHECK(bill.billing_demand_kw[0] == doctest::Approx(6));
    CHECK(bill.billing_demand_kw[1] == doctest::Approx(6));   // 10 kW at noon is outside
    CHECK(bill.billing_demand_kw[2] == doctest::Approx(16));  // 80% of max(9, 20)
    CHECK(bill.billing_demand_kw[3] == doctest::Approx(7));   // 60-min peak 6 kW < 7
    CHECK(Amounts(bill).size() == 6);
    CHECK(FormatCents(bill.lines[2].amount) == "60.00");
    CHECK(FormatCents(bill.lines[3].amount) == "30.00");
  }

  TEST_CASE("tiers are prorated by days when asked") {
    LocalTime zone = Zone("UTC");
    TariffConfig config;
    config.rates = testing::FlatRates(0);
    config.tiers = {{"all year", {{300, 0.10}, {0, 0.20}}}};
    config.prorate_tiers = true;
    config.prorate_days = 30;
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 1);  // 31 days: first block 310 kWh
    Bill bill = MakeBill(MakeTariff(config), zone, {cycle, {testing::Even("h", cycle, 400)}, {}, 0, 0});
    CHECK(bill.lines[0].quantity == doctest::Approx(310));
    CHECK(Amounts(bill) == Strings{"31.00", "18.00"});
  }

  // tests/reference/data/tz (IANA tz data): America/Chicago changes clocks on 8 March 2026
  // (02:00 -> 03:00) and 1 November 2026 (02:00 -> 01:00). A constant 1 kW load gives 23 and
  // 25 kWh; the peak hours 16:00-21:00 hold 5 kWh either way; the extra or missing hour is base.
  TEST_CASE("constant 1 kW over each 2026 DST day in America/Chicago") {
    LocalTime zone = Zone("America/Chicago");
    Tariff tariff = MakeTariff(PeakTariff());
    for (auto [day, hours] : {std::pair{2026_y / 3 / 8, 23.0}, std::pair{2026_y / 11 / 1, 25.0}}) {
      Result<TimeRange> range = zone.Day(day);
      REQUIRE(range.ok());
      date::year_month_day next{date::sys_days{day} + date::days{1}};
      BillingCycle one_day{day, next, *range};
      Bill bill = MakeBill(tariff, zone, {one_day, {Load("house", one_day, [](int) { return 0.25; })}, {}, 0, 0});
      CHECK(bill.hours == hours);
      REQUIRE(bill.lines.size() == 2);
      CHECK(bill.lines[0].description == "Energy, peak");
      CHECK(bill.lines[0].quantity == doctest::Approx(5));
      CHECK(bill.lines[1].quantity == doctest::Approx(hours - 5));
    }
  }

  TEST_CASE("a bucket outside the cycle is refused") {
    LocalTime zone = Zone("UTC");
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 4);
    LoadSeries load{"house", false, false, {}};
    load.buckets.push_back({});
    load.buckets[0].start_ms = cycle.range.end_ms;
    Result<Bill> bill = ComputeBill(MakeTariff(PeakTariff()), zone, {cycle, {load}, {}, 0, 0});
    REQUIRE_FALSE(bill.ok());
    CHECK(bill.status().message() ==
          "load \"house\": bucket at " + std::to_string(cycle.range.end_ms) +
              " ms is not a 15-minute bucket of the cycle");
  }

  // Properties over seeded random tariffs and loads (bounded: 40 rounds of one week).
  TEST_CASE("random tariffs: energy of two halves sums to the whole; no charge negative") {
    std::uint64_t state = 2026;
    auto next = [&] {
      state = state * 6364136223846793005ULL + 1442695040888963407ULL;
      return static_cast<double>(state >> 40) / static_cast<double>(1ULL << 24);
    };
    LocalTime zone = Zone("America/Chicago");
    for (int round = 0; round < 40; ++round) {
      TariffConfig config;
      Season season{"all year", date::January / 1, date::December / 31,
                    {{"a", std::round(next() * 3e5) / 1e6}, {"b", std::round(next() * 3e5) / 1e6}},
                    {}, "b", std::nullopt};
      int start = static_cast<int>(next() * 96) * 15;
      int end = static_cast<int>(next() * 96) * 15;
      if (start == end) end = (end + 15) % 1440;
      season.windows.push_back({"a", start, end, 1u + static_cast<unsigned>(next() * 7) % 7});
      config.rates = {"random", {season}, {}};
      config.adders = {{"adder", std::round(next() * 5e4) / 1e6}};
      config.fixed = {{"fixed", std::round(next() * 2e7) / 1e6, FixedPer::kDay}};
      config.adjustments = {{"tax", std::round(next() * 200) / 10}};
      Tariff tariff = MakeTariff(config);
      std::vector<double> kwh(7 * 96);
      for (double& value : kwh) value = next() * 2;
      Result<TimeRange> first = zone.Day(2026_y / 3 / 5);
      Result<TimeRange> middle = zone.Day(2026_y / 3 / 9);
      Result<TimeRange> last = zone.Day(2026_y / 3 / 11);
      REQUIRE((first.ok() && middle.ok() && last.ok()));
      BillingCycle week{2026_y / 3 / 5, 2026_y / 3 / 12, {first->start_ms, last->end_ms}};
      BillingCycle early{2026_y / 3 / 5, 2026_y / 3 / 9, {first->start_ms, middle->start_ms}};
      BillingCycle late{2026_y / 3 / 9, 2026_y / 3 / 12, {middle->start_ms, last->end_ms}};
      auto bill = [&](const BillingCycle& cycle) {
        int offset = static_cast<int>((cycle.range.start_ms - week.range.start_ms) / kMsPerBucket);
        return MakeBill(tariff, zone, {cycle, {Load("h", cycle, [&](int k) {
                                                 return kwh[offset + k]; })}, {}, 0, 0});
      };
      Bill whole = bill(week), a = bill(early), b = bill(late);
      double whole_energy = 0, split_energy = 0;
      for (const BillLine& line : whole.lines) {
        if (line.kind == LineKind::kEnergy) whole_energy += line.quantity;
        if (!line.IsCredit()) CHECK(line.amount >= 0);
      }
      for (const Bill* part : {&a, &b}) {
        for (const BillLine& line : part->lines) {
          if (line.kind == LineKind::kEnergy) split_energy += line.quantity;
        }
      }
      CHECK(whole_energy == doctest::Approx(split_energy));
      CHECK(whole.billed_kwh == doctest::Approx(a.billed_kwh + b.billed_kwh));
      CHECK(whole.hours == 7 * 24 - 1);  // the week holds 8 March 2026
    }
  }
}

}  // namespace
}  // namespace ampledger
