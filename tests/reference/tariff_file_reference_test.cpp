// tests/reference/tariff_file_reference_test.cpp
// The tariff library files in config/tariffs, read from disk and billed: the published worked
// bills and hand computations of tests/reference/data/tariffs/WORKED-EXAMPLES.md come out to
// the cent through the file format, not only through hand-built structs.
#include <doctest/doctest.h>

#include "config/tariff_reader.h"
#include "daemon/metering/bill.h"
#include "metering/bill_test_util.h"
#include "test_util.h"

namespace ampledger {
namespace {

using date::operator""_y;
using testing::Cycle;
using testing::Even;
using testing::MakeBill;
using testing::Zone;

Tariff FromFile(const char* name) {
  Result<TariffConfig> config =
      ReadTariffFile((testing::SourceDir() / "config" / "tariffs" / name).string());
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  return testing::MakeTariff(*config);
}

TEST_SUITE("reference") {
  // WORKED-EXAMPLES.md 1.1 [PUB]: 1,200 kWh in winter -> $171.55; 2,000 kWh in summer ->
  // $277.88.
  TEST_CASE("declining-blocks-power-cost.toml reproduces both published Seymour bills") {
    LocalTime zone = Zone("America/Chicago");
    Tariff tariff = FromFile("declining-blocks-power-cost.toml");
    BillingCycle january = Cycle(zone, 1, 2026_y / 1);
    BillingCycle july = Cycle(zone, 1, 2026_y / 7);
    CHECK(FormatCents(MakeBill(tariff, zone, {january, {Even("h", january, 1200)}, {}, 0, 0}).total) ==
          "171.55");
    CHECK(FormatCents(MakeBill(tariff, zone, {july, {Even("h", july, 2000)}, {}, 0, 0}).total) ==
          "277.88");
  }

  // WORKED-EXAMPLES.md 3.1 [HAND]: summer 1,200 kWh -> $156.00; 10 kWh -> the $18.00 minimum.
  TEST_CASE("inclining-blocks-minimum-bill.toml: $156.00 and the $18.00 minimum [HAND]") {
    LocalTime zone = Zone("America/New_York");
    Tariff tariff = FromFile("inclining-blocks-minimum-bill.toml");
    BillingCycle july = Cycle(zone, 1, 2026_y / 7);
    CHECK(FormatCents(MakeBill(tariff, zone, {july, {Even("h", july, 1200)}, {}, 0, 0}).total) ==
          "156.00");
    CHECK(FormatCents(MakeBill(tariff, zone, {july, {Even("h", july, 10)}, {}, 0, 0}).total) ==
          "18.00");
  }

  // WORKED-EXAMPLES.md 2.1 [HAND]: constant 1 kW Mon 22 - Sun 28 Dec 2025 (Christmas and
  // Boxing Day holidays): on 18 h, mid 18 h, off 132 h -> $19.416 of energy; here rounded per
  // line: 3.654 -> 3.65, 2.826 -> 2.83, 12.936 -> 12.94 = 19.42 before the rebate and tax.
  TEST_CASE("time-of-use-rebate-then-tax.toml: the holiday week's energy lines [HAND]") {
    LocalTime zone = Zone("America/Toronto");
    Tariff tariff = FromFile("time-of-use-rebate-then-tax.toml");
    Result<TimeRange> first = zone.Day(2025_y / 12 / 22);
    Result<TimeRange> last = zone.Day(2025_y / 12 / 28);
    REQUIRE((first.ok() && last.ok()));
    BillingCycle week{2025_y / 12 / 22, 2025_y / 12 / 29, {first->start_ms, last->end_ms}};
    Bill bill = MakeBill(tariff, zone,
                         {week, {testing::Load("h", week, [](int) { return 0.25; })}, {}, 0, 0});
    REQUIRE(bill.lines.size() == 5);
    CHECK(bill.lines[0].quantity == doctest::Approx(18));   // on-peak
    CHECK(bill.lines[1].quantity == doctest::Approx(18));   // mid-peak
    CHECK(bill.lines[2].quantity == doctest::Approx(132));  // off-peak
    CHECK(testing::Amounts(bill) ==
          std::vector<std::string>{"3.65", "2.83", "12.94", "-4.56", "1.93"});
    // 19.42 - 4.56 (23.5% = 4.5637) = 14.86; 13% = 1.9318 -> 1.93; total 16.79 (hand, ours).
    CHECK(FormatCents(bill.total) == "16.79");
  }

  // WORKED-EXAMPLES.md 3.3 [HAND]: 800 kW at PF 0.85, 400,000 kWh -> $32,038.00.
  TEST_CASE("general-service-demand.toml: power-factor-adjusted demand $32,038.00 [HAND]") {
    LocalTime zone = Zone("America/Chicago");
    Tariff tariff = FromFile("general-service-demand.toml");
    BillingCycle cycle = Cycle(zone, 1, 2026_y / 1);
    int count = static_cast<int>(cycle.range.DurationMs() / kMsPerBucket);
    double rest = (400'000.0 - 200) / (count - 1);
    LoadSeries load = testing::Load("plant", cycle,
                                    [&](int k) { return k == 7 ? 200.0 : rest; }, 0.85);
    CHECK(FormatCents(MakeBill(tariff, zone, {cycle, {load}, {}, 0, 0}).total) == "32038.00");
  }
}

}  // namespace
}  // namespace ampledger
