// tests/espi/espi_writer_test.cpp
#include "daemon/espi/espi_writer.h"

#include <doctest/doctest.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>

#include "daemon/espi/espi_reader.h"
#include "test_util.h"

namespace ampledger {
namespace {

EspiFeed TwoSeries() {
  EspiFeed feed;
  feed.title = "Usage of unit \"upper\" & co <test>";
  EspiSeries drawn;
  drawn.usage_point_title = "unit upper";
  drawn.title = "energy drawn";
  drawn.type.interval_length_s = 3600;
  drawn.blocks.push_back({1800000000, 7200, {{1800000000, 3600, 410}, {1800003600, 3600, 0}}});
  EspiSeries exported = drawn;
  exported.title = "energy exported";
  exported.type.flow_direction = kEspiFlowReverse;
  exported.blocks[0].readings[1].value = 77;
  feed.series = {drawn, exported};
  return feed;
}

// The output of `command`, or "" when it cannot run.
std::string CommandOutput(const std::string& command) {
  std::string out;
  if (FILE* pipe = popen(command.c_str(), "r")) {
    char buffer[256];
    while (fgets(buffer, sizeof buffer, pipe) != nullptr) out += buffer;
    pclose(pipe);
  }
  return out;
}

TEST_SUITE("espi") {

// Reference: Python 3's uuid module (a general-purpose reference library),
// uuid.uuid5(uuid.NAMESPACE_URL, "https://example.org/ampledger").
TEST_CASE("name-based UUIDs match RFC 9562 version 5 as Python's uuid module computes them") {
  CHECK(NameBasedUuid("https://example.org/ampledger") == "ce407928-23c0-5e61-b496-f7f4a715eb56");
}

TEST_CASE("a written feed reads back to the same series") {
  EspiWriteOptions options;
  options.updated_s = 1800010000;
  options.id_seed = "test-site/unit/upper";
  const std::string xml = WriteEspiFeed(TwoSeries(), options);
  Result<EspiFeed> back = ReadEspiFeed(xml, "written.xml");
  REQUIRE(back.ok());
  CHECK(back->title == "Usage of unit \"upper\" & co <test>");
  REQUIRE(back->series.size() == 2);
  const EspiFeed written = TwoSeries();
  for (int i = 0; i < 2; ++i) {
    const EspiSeries& want = written.series[i];
    const EspiSeries& got = back->series[i];
    CHECK(got.usage_point_title == "unit upper");
    CHECK(got.title == want.title);
    CHECK(got.type.flow_direction == want.type.flow_direction);
    CHECK(got.type.interval_length_s == 3600);
    CHECK(got.type.uom == 72);
    CHECK(got.type.kind == 12);
    CHECK(got.type.accumulation_behaviour == 4);
    CHECK(got.type.commodity == 1);
    REQUIRE(got.blocks.size() == 1);
    CHECK(got.blocks[0].start_s == 1800000000);
    CHECK(got.blocks[0].duration_s == 7200);
    REQUIRE(got.blocks[0].readings.size() == 2);
    CHECK(got.blocks[0].readings[1].value == want.blocks[0].readings[1].value);
    CHECK(got.blocks[0].readings[1].start_s == 1800003600);
  }
  CHECK(xml.find("<feed xmlns=\"http://www.w3.org/2005/Atom\">") != std::string::npos);
  CHECK(xml.find("<IntervalBlock xmlns=\"http://naesb.org/espi\">") != std::string::npos);
  CHECK(xml.find("<updated>2027-01-15T10:46:40Z</updated>") != std::string::npos);
  CHECK(WriteEspiFeed(TwoSeries(), options) == xml);  // same input, same ids: reproducible
}

// xmllint (libxml2-utils) as an outside check that the document is well-formed and that the
// ESPI elements are in the ESPI namespace. Skipped when xmllint is not installed.
TEST_CASE("xmllint finds the feed well-formed, with the ESPI elements in the ESPI namespace") {
  if (std::system("command -v xmllint > /dev/null 2>&1") != 0) {
    MESSAGE("xmllint is not installed (Debian: libxml2-utils); skipped");
    return;
  }
  testing::TempDir dir;
  const std::string path = dir.File("feed.xml");
  testing::WriteFile(path, WriteEspiFeed(TwoSeries(), EspiWriteOptions{}));
  CHECK(CommandOutput("xmllint --noout '" + path + "' 2>&1 && echo ok") == "ok\n");
  CHECK(CommandOutput("xmllint --xpath \"count(//*[namespace-uri()='http://naesb.org/espi' and "
                      "local-name()='IntervalReading'])\" '" +
                      path + "'") == "4\n");
  CHECK(CommandOutput("xmllint --xpath \"count(//*[namespace-uri()='http://naesb.org/espi' and "
                      "local-name()='ReadingType']/*[local-name()='uom' and .='72'])\" '" +
                      path + "'") == "2\n");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
