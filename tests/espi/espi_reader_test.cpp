// tests/espi/espi_reader_test.cpp
#include "daemon/espi/espi_reader.h"

#include <doctest/doctest.h>

#include "test_util.h"

namespace ampledger {
namespace {

const char* kSampleName = "green-button-sample-2012-03-11-dst-day.xml";

std::string Sample() { return testing::ReadFile(testing::ReferenceDir() / "espi" / kSampleName); }

std::string Feed(const std::string& content) {
  return "<?xml version=\"1.0\"?>\n<feed xmlns=\"http://www.w3.org/2005/Atom\">\n"
         "<entry><link rel=\"self\" href=\"/r/UsagePoint/1/MeterReading/1\"/>"
         "<link rel=\"related\" href=\"/r/ReadingType/1\"/>"
         "<content><MeterReading xmlns=\"http://naesb.org/espi\"/></content></entry>\n"
         "<entry><link rel=\"self\" href=\"/r/ReadingType/1\"/><content>"
         "<ReadingType xmlns=\"http://naesb.org/espi\"><uom>72</uom></ReadingType>"
         "</content></entry>\n"
         "<entry><link rel=\"self\" href=\"/r/UsagePoint/1/MeterReading/1/IntervalBlock/1\"/>\n"
         "<content><IntervalBlock xmlns=\"http://naesb.org/espi\">\n" +
         content + "</IntervalBlock></content></entry>\n</feed>\n";
}

TEST_SUITE("espi") {

// The published Green Button sample (tests/reference/data/espi/SOURCES.md: OpenESPI-Common-java
// fixture test_usage_data_11.xml): its ReadingType codes and its one IntervalBlock as the
// SOURCES.md table states them.
TEST_CASE("reads the published sample's reading type and intervals") {
  Result<EspiFeed> feed = ReadEspiFeed(Sample(), kSampleName);
  REQUIRE(feed.ok());
  REQUIRE(feed->series.size() == 1);
  const EspiSeries& series = feed->series[0];
  CHECK(series.usage_point_title == "Front Electric Meter");
  CHECK(series.title == "Fifteen Minute Electricity Consumption");
  CHECK(series.type.accumulation_behaviour == 4);
  CHECK(series.type.commodity == 1);
  CHECK(series.type.data_qualifier == 12);
  CHECK(series.type.flow_direction == 1);
  CHECK(series.type.interval_length_s == 900);
  CHECK(series.type.kind == 12);
  CHECK(series.type.power_of_ten_multiplier == 0);
  CHECK(series.type.time_attribute == 0);
  CHECK(series.type.uom == 72);
  REQUIRE(series.blocks.size() == 1);
  const EspiIntervalBlock& block = series.blocks[0];
  CHECK(block.start_s == 1331442000);  // 2012-03-11T05:00:00Z = 00:00 EST
  CHECK(block.duration_s == 82800);    // 23 hours: the spring-forward day
  REQUIRE(block.readings.size() == 92);
  std::int64_t sum = 0, low = block.readings[0].value, high = low;
  for (size_t i = 0; i < block.readings.size(); ++i) {
    const EspiIntervalReading& reading = block.readings[i];
    CHECK(reading.duration_s == 900);
    CHECK(reading.start_s == 1331442000 + 900 * static_cast<std::int64_t>(i));  // contiguous
    sum += reading.value;
    low = std::min(low, reading.value);
    high = std::max(high, reading.value);
  }
  CHECK(sum == 109403);  // SOURCES.md: sum of values 109,403 Wh
  CHECK(low == 272);     // SOURCES.md: min / max 272 / 1,654 Wh per 15 min
  CHECK(high == 1654);
}

TEST_CASE("malformed XML names the file and line") {
  Result<EspiFeed> feed = ReadEspiFeed("<?xml version=\"1.0\"?>\n<feed>\n<entry>\n</feed>\n",
                                       "bad.xml");
  REQUIRE(!feed.ok());
  CHECK(feed.status().message() ==
        "bad.xml:4: not well-formed XML: Opening and ending tag mismatch: entry line 3 and feed");
}

TEST_CASE("a root that is not an Atom feed is refused") {
  Result<EspiFeed> feed =
      ReadEspiFeed("<?xml version=\"1.0\"?>\n<feed xmlns=\"urn:other\"/>\n", "other.xml");
  REQUIRE(!feed.ok());
  CHECK(feed.status().message() ==
        "other.xml:2: <feed>: the root element is not an Atom <feed> (namespace "
        "http://www.w3.org/2005/Atom)");
}

TEST_CASE("an IntervalReading without a value is refused, naming the element and line") {
  Result<EspiFeed> feed = ReadEspiFeed(
      Feed("<interval><start>0</start><duration>900</duration></interval>\n"
           "<IntervalReading><timePeriod><start>0</start><duration>900</duration></timePeriod>"
           "</IntervalReading>\n"),
      "f.xml");
  REQUIRE(!feed.ok());
  CHECK(feed.status().message() == "f.xml:8: <IntervalReading>: has no <value>");
}

TEST_CASE("a value that is not an integer is refused") {
  Result<EspiFeed> feed = ReadEspiFeed(
      Feed("<interval><start>0</start><duration>900</duration></interval>\n"
           "<IntervalReading><timePeriod><start>0</start><duration>900</duration></timePeriod>"
           "<value>12.5</value></IntervalReading>\n"),
      "f.xml");
  REQUIRE(!feed.ok());
  CHECK(feed.status().message() == "f.xml:8: <value>: \"12.5\" is not an integer");
}

TEST_CASE("a DOCTYPE is refused, so no entity is ever expanded") {
  // An external entity would read a local file if substituted (the "XXE" attack), and nested
  // internal ones grow without bound: ESPI files declare none, so any DOCTYPE is refused.
  const std::string xml =
      "<?xml version=\"1.0\"?>\n<!DOCTYPE feed [<!ENTITY secret SYSTEM \"file:///etc/hostname\">]>\n" +
      Feed("<interval><start>0</start><duration>900</duration></interval>\n"
           "<IntervalReading><timePeriod><start>0</start><duration>900</duration></timePeriod>"
           "<value>&secret;</value></IntervalReading>\n")
          .substr(22);
  Result<EspiFeed> feed = ReadEspiFeed(xml, "x.xml");
  REQUIRE(!feed.ok());
  CHECK(feed.status().message() ==
        "x.xml: a DOCTYPE is not allowed in an ESPI file (it could declare entities)");
}

TEST_CASE("a file over the size limit is refused before parsing") {
  Result<EspiFeed> feed = ReadEspiFeed(std::string(kMaxEspiFileBytes + 1, ' '), "big.xml");
  REQUIRE(!feed.ok());
  CHECK(feed.status().message().rfind("big.xml: ", 0) == 0);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
