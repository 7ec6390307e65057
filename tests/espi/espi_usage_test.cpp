// tests/espi/espi_usage_test.cpp
#include "daemon/espi/espi_usage.h"

#include <doctest/doctest.h>

#include "daemon/espi/espi_reader.h"
#include "daemon/espi/espi_writer.h"
#include "test_util.h"

namespace ampledger {
namespace {

const char* kSampleName = "green-button-sample-2012-03-11-dst-day.xml";

std::vector<MeterInterval> SampleIntervals() {
  Result<EspiFeed> feed =
      ReadEspiFeed(testing::ReadFile(testing::ReferenceDir() / "espi" / kSampleName), kSampleName);
  REQUIRE(feed.ok());
  Result<std::vector<MeterInterval>> intervals = DeliveredIntervals(*feed, kSampleName);
  REQUIRE(intervals.ok());
  return *intervals;
}

LocalTime NewYork() {
  Result<LocalTime> zone = LocalTime::ForZone("America/New_York");
  REQUIRE(zone.ok());
  return *zone;
}

TimeRange SampleDay() {
  Result<TimeRange> day = NewYork().Day(date::year{2012} / 3 / 11);
  REQUIRE(day.ok());
  return *day;
}

TEST_SUITE("espi") {

// tests/reference/data/espi/SOURCES.md: the sample's 92 readings of 15 minutes sum to
// 109,403 Wh over 2012-03-11 in America/New_York, a 23-hour day. The day's bounds come from
// the machine's IANA tz data (spring forward at 02:00 EST on the second Sunday of March).
TEST_CASE("the sample's delivered energy over its 23-hour local day is 109.403 kWh") {
  const std::vector<MeterInterval> intervals = SampleIntervals();
  REQUIRE(intervals.size() == 92);
  const TimeRange day = SampleDay();
  CHECK(day.start_ms == 1331442000000);
  CHECK(day.DurationMs() == 23 * 3600 * kMsPerSecond);
  Result<MeterEnergy> energy = MeterIntervalEnergy(intervals, day);
  REQUIRE(energy.ok());
  CHECK(energy->kwh == doctest::Approx(109.403).epsilon(1e-12));
  CHECK(energy->basis == "main meter interval reads");
}

TEST_CASE("the sample written by us reads back to the same readings, in one 23-hour block") {
  const std::vector<MeterInterval> intervals = SampleIntervals();
  EspiSeriesOptions options{"site", "main meter again", kEspiFlowForward, 900, {}};
  EspiFeed feed{"again", {BuildEspiSeries(options, NewYork(), intervals)}};
  REQUIRE(feed.series[0].blocks.size() == 1);
  CHECK(feed.series[0].blocks[0].start_s == 1331442000);
  CHECK(feed.series[0].blocks[0].duration_s == 82800);
  Result<EspiFeed> back = ReadEspiFeed(WriteEspiFeed(feed, EspiWriteOptions{}), "again.xml");
  REQUIRE(back.ok());
  Result<std::vector<MeterInterval>> again = DeliveredIntervals(*back, "again.xml");
  REQUIRE(again.ok());
  REQUIRE(again->size() == intervals.size());
  for (size_t i = 0; i < intervals.size(); ++i) {
    CHECK((*again)[i].span.start_ms == intervals[i].span.start_ms);
    CHECK((*again)[i].span.end_ms == intervals[i].span.end_ms);
    CHECK((*again)[i].wh == intervals[i].wh);
  }
}

TEST_CASE("values carry the rounding remainder so the sum is the rounded total") {
  std::vector<MeterInterval> intervals;
  for (int i = 0; i < 10; ++i) {
    intervals.push_back({{1800000000000 + i * 900000LL, 1800000000000 + (i + 1) * 900000LL}, 0.4});
  }
  EspiSeries series = BuildEspiSeries({"u", "t", kEspiFlowForward, 900, {}}, NewYork(), intervals);
  std::int64_t sum = 0;
  for (const EspiIntervalBlock& block : series.blocks) {
    for (const EspiIntervalReading& reading : block.readings) {
      CHECK((reading.value == 0 || reading.value == 1));
      sum += reading.value;
    }
  }
  CHECK(sum == 4);  // 10 x 0.4 Wh; rounding each alone would give 0
}

TEST_CASE("a file with only received energy has nothing to import") {
  EspiSeries exported;
  exported.title = "solar";
  exported.type.flow_direction = kEspiFlowReverse;
  Result<std::vector<MeterInterval>> intervals =
      DeliveredIntervals(EspiFeed{"x", {exported}}, "solar.xml");
  REQUIRE(!intervals.ok());
  CHECK(intervals.status().message() ==
        "solar.xml: no series of delivered interval energy (kind 12, uom 72 Wh, flowDirection 1, "
        "accumulationBehaviour 4); found \"solar\" (kind 12, uom 72, flowDirection 19, "
        "accumulationBehaviour 4)");
}

TEST_CASE("negative and overlapping readings are refused, naming the interval") {
  EspiSeries series;
  series.title = "m";
  series.blocks.push_back({0, 1800, {{1800000000, 900, 5}, {1800000000, 900, 6}}});
  Result<std::vector<MeterInterval>> overlap = DeliveredIntervals(EspiFeed{"", {series}}, "o.xml");
  REQUIRE(!overlap.ok());
  CHECK(overlap.status().message() ==
        "o.xml: interval 2027-01-15T08:00:00Z to 2027-01-15T08:15:00Z overlaps interval "
        "2027-01-15T08:00:00Z to 2027-01-15T08:15:00Z");
  series.blocks[0].readings = {{1800000000, 900, -5}};
  Result<std::vector<MeterInterval>> negative =
      DeliveredIntervals(EspiFeed{"", {series}}, "n.xml");
  REQUIRE(!negative.ok());
  CHECK(negative.status().message() ==
        "n.xml: interval 2027-01-15T08:00:00Z to 2027-01-15T08:15:00Z: energy must be from 0 to "
        "1e9 Wh");
}

TEST_CASE("powerOfTenMultiplier scales the values: kWh with 3") {
  EspiSeries series;
  series.type.power_of_ten_multiplier = 3;
  series.blocks.push_back({0, 900, {{1800000000, 900, 2}}});
  Result<std::vector<MeterInterval>> intervals = DeliveredIntervals(EspiFeed{"", {series}}, "k");
  REQUIRE(intervals.ok());
  CHECK((*intervals)[0].wh == 2000);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
