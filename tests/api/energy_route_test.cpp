// tests/api/energy_route_test.cpp
// GroupEnergy on hand-made buckets' totals: consumption and export kept apart, coverage
// weighted by circuit, and what each scope's rows hold. (The route itself, over a real server
// and database, is in api_routes_test.cpp.)
#include "api/energy_route.h"

#include <doctest/doctest.h>

#include "test_util.h"

namespace ampledger {
namespace {

Config SolarConfig(const testing::TempDir& dir) {
  // Invented: unit "upper" has a heat pump and its own roof panels; the stairwell is shared.
  const std::string toml = R"toml(
[site]
name = "Larch Court"
time_zone = "Europe/Lisbon"
nominal_volts = [230]

[[node]]
id = "board"
key = "00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff"
[[node.channel]]
id = "ct1"
[[node.channel]]
id = "ct2"
[[node.channel]]
id = "ct3"

[[circuit]]
id = "heat-pump"
channels = ["board/ct1"]
[[circuit]]
id = "roof-pv"
channels = ["board/ct2"]
direction = "export"
[[circuit]]
id = "stairs"
channels = ["board/ct3"]

[[unit]]
id = "upper"
circuits = ["heat-pump", "roof-pv"]
)toml";
  Result<Config> config = ParseConfig(toml, dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  return *config;
}

CircuitBucket Bucket(UnixMs start_ms, double wh, Quality quality = Quality::kMeasured) {
  CircuitBucket bucket;
  bucket.start_ms = start_ms;
  bucket.real_wh = wh;
  bucket.apparent_vah = wh * 1.25;
  bucket.coverage = 1;
  bucket.quality = quality;
  return bucket;
}

TEST_SUITE("api") {
  TEST_CASE("GroupEnergy keeps export apart from consumption and weights coverage") {
    testing::TempDir dir;
    const Config config = SolarConfig(dir);
    const TimeRange hour{0, 4 * kMsPerBucket};
    // heat pump: 4 buckets; roof panels: 2 of 4 (estimated); stairs: none.
    const std::vector<int> visible = {0, 1, 2};
    const std::vector<std::vector<CircuitBucket>> buckets = {
        {Bucket(0, 100), Bucket(kMsPerBucket, 100), Bucket(2 * kMsPerBucket, 100),
         Bucket(3 * kMsPerBucket, 100)},
        {Bucket(0, 50, Quality::kEstimated), Bucket(kMsPerBucket, 30)},
        {}};
    std::vector<CircuitTotal> totals;
    for (const std::vector<CircuitBucket>& circuit : buckets) totals.push_back(TotalOf(circuit));
    const Scope admin{Scope::Kind::kAdmin, ""};

    std::vector<EnergyRow> units =
        GroupEnergy(config, admin, EnergyGrouping::kUnit, visible, totals, hour);
    REQUIRE(units.size() == 2);
    CHECK(units[0].id == "upper");
    CHECK(units[0].circuits == std::vector<int>{0, 1});
    CHECK(units[0].consumption.real_wh == doctest::Approx(400));
    CHECK(units[0].exported.real_wh == doctest::Approx(80));
    CHECK(units[0].consumption.apparent_vah + units[0].exported.apparent_vah ==
          doctest::Approx(600));
    CHECK(units[0].coverage == doctest::Approx((1.0 + 0.5) / 2));  // 4 of 4 and 2 of 4
    CHECK(units[0].quality == Quality::kEstimated);                 // the worse of the two
    CHECK(units[1].id == "");  // the shared stairwell: no data at all
    CHECK(units[1].circuits == std::vector<int>{2});
    CHECK_FALSE(units[1].has_data);
    CHECK(units[1].coverage == 0);

    std::vector<EnergyRow> circuits =
        GroupEnergy(config, admin, EnergyGrouping::kCircuit, visible, totals, hour);
    REQUIRE(circuits.size() == 3);
    CHECK(circuits[1].id == "roof-pv");
    CHECK(circuits[1].consumption.real_wh == 0);
    CHECK(circuits[1].exported.real_wh == doctest::Approx(80));

    // A unit token: its unit's row only, no row for the circuits of no unit.
    const Scope upper{Scope::Kind::kUnit, "upper"};
    std::vector<EnergyRow> own =
        GroupEnergy(config, upper, EnergyGrouping::kUnit, {0, 1}, {totals[0], totals[1]}, hour);
    REQUIRE(own.size() == 1);
    CHECK(own[0].id == "upper");

    // The columns render those rows; each unit-bearing column names its unit.
    const std::vector<EnergyColumn> columns = EnergyColumns(config, EnergyGrouping::kCircuit);
    std::vector<std::string> names;
    for (const EnergyColumn& column : columns) names.push_back(column.name);
    CHECK(names == std::vector<std::string>{"circuit", "name", "unit", "direction",
                                            "consumption_kwh", "export_kwh",
                                            "apparent_energy_kvah", "coverage", "quality"});
    CHECK(columns[3].value(circuits[1]) == "export");
    CHECK(columns[5].value(circuits[1]) == doctest::Approx(0.08));
    CHECK(std::string(columns[5].unit) == "kWh");
    CHECK(columns[2].value(circuits[2]).is_null());
  }
}

}  // namespace
}  // namespace ampledger
