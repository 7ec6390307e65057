// tests/daemon/espi_command_test.cpp
// `ampledger espi-import` and `espi-export` as a person runs them: the published Green Button
// sample imported (twice: nothing changes), malformed files refused with the file, line and
// element, and an export that imports back to the same energy.
#include "daemon/espi_command.h"

#include <doctest/doctest.h>
#include <sys/wait.h>

#include <cstdio>

#include "config/config.h"
#include "daemon/metering/reading.h"
#include "storage/database.h"
#include "storage/series.h"
#include "test_util.h"

namespace ampledger {
namespace {

using testing::TempDir;
using testing::WriteFile;

struct Run {
  int exit_code = -1;
  std::string output;  // stdout and stderr
};

Run Ampledger(const std::string& arguments) {
  Run run;
  FILE* pipe = ::popen((testing::AmpledgerBinary() + " " + arguments + " 2>&1").c_str(), "r");
  REQUIRE(pipe != nullptr);
  char buffer[4096];
  size_t count;
  while ((count = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) run.output.append(buffer, count);
  const int status = ::pclose(pipe);
  run.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return run;
}

// Invented: a house in the US Eastern zone with two circuits of its own, one unit.
const char* kSite = R"(
[site]
name = "Birch Lane house"
time_zone = "America/New_York"
nominal_volts = [120]
[[node]]
id = "panel"
auth = "plain"
[[node.channel]]
id = "ct1"
[[circuit]]
id = "dryer"
channels = ["panel/ct1"]
[[unit]]
id = "home"
circuits = ["dryer"]
[storage]
path = "site.db"
)";

const std::string kSample =
    (testing::ReferenceDir() / "espi" / "green-button-sample-2012-03-11-dst-day.xml").string();

TEST_SUITE("daemon") {
  // tests/reference/data/espi/SOURCES.md: 92 readings from 2012-03-11T05:00:00Z over 23 hours,
  // 109,403 Wh in all.
  TEST_CASE("importing the published sample stores its 92 intervals once") {
    TempDir dir;
    WriteFile(dir.path() / "site.toml", kSite);
    const std::string config = "-c " + dir.File("site.toml");
    Run first = Ampledger("espi-import " + config + " " + kSample);
    CHECK(first.exit_code == 0);
    CHECK(first.output == kSample + ": 2012-03-11T05:00:00Z to 2012-03-12T04:00:00Z, 109.403 kWh "
                                    "delivered; 92 intervals added, 0 already stored, 0 replaced\n");
    Run again = Ampledger("espi-import " + config + " " + kSample);
    CHECK(again.exit_code == 0);
    CHECK(again.output.find("0 intervals added, 92 already stored, 0 replaced") !=
          std::string::npos);
    CHECK(testing::QueryInt(dir.File("site.db"), "SELECT count(*) FROM main_meter_interval") == 92);
    CHECK(testing::QueryDouble(dir.File("site.db"), "SELECT sum(wh) FROM main_meter_interval") ==
          109403);
  }

  TEST_CASE("a malformed file is refused naming the file and line; nothing is stored") {
    TempDir dir;
    WriteFile(dir.path() / "site.toml", kSite);
    WriteFile(dir.path() / "cut.xml", testing::ReadFile(kSample).substr(0, 5000));
    Run cut = Ampledger("espi-import -c " + dir.File("site.toml") + " " + dir.File("cut.xml"));
    CHECK(cut.exit_code == 2);
    CHECK(cut.output.rfind("ampledger espi-import: " + dir.File("cut.xml") + ":", 0) == 0);
    CHECK(cut.output.find(": not well-formed XML: ") != std::string::npos);
    Run missing = Ampledger("espi-import -c " + dir.File("site.toml") + " " + dir.File("no.xml"));
    CHECK(missing.exit_code == 2);
    CHECK(missing.output ==
          "ampledger espi-import: " + dir.File("no.xml") + ": cannot open the file\n");
  }

  TEST_CASE("an export of stored energy imports back as the same energy") {
    TempDir dir;
    WriteFile(dir.path() / "site.toml", kSite);
    const std::string config = "-c " + dir.File("site.toml");
    {
      // The dryer's 15-minute rollups over 2012-03-11 (a 23-hour local day): 37.3 Wh each.
      Result<Config> site = LoadConfig(dir.File("site.toml"));
      REQUIRE(site.ok());
      Result<std::unique_ptr<Database>> db = Database::Open(site->storage);
      REQUIRE(db.ok());
      Result<SeriesMap> series = RegisterSeries(**db, *site);
      REQUIRE(series.ok());
      Result<Statement> insert = (*db)->Prepare(
          "INSERT INTO rollup (circuit, bucket, real_wh, apparent_vah, min_w, max_w, coverage, "
          "quality) VALUES (?1, ?2, 37.3, 37.3, 149.2, 149.2, 1, 0)");
      REQUIRE(insert.ok());
      for (int k = 0; k < 92; ++k) {
        insert->Bind(1, series->circuit_ids[0]);
        insert->Bind(2, static_cast<std::int64_t>(1331442000000 + k * kMsPerBucket));
        REQUIRE(insert->Run("insert rollup").ok());
      }
    }
    Run exported = Ampledger("espi-export " + config + " --unit home --from 2012-03-11 --to "
                             "2012-03-12 -o " + dir.File("home.xml"));
    CHECK(exported.exit_code == 0);
    CHECK(exported.output == "");
    const std::string xml = testing::ReadFile(dir.path() / "home.xml");
    CHECK(xml.find("<UsagePoint xmlns=\"http://naesb.org/espi\">") != std::string::npos);

    // Into another site's database as its main meter: 92 x 37.3 = 3431.6 Wh, rounded to whole
    // Wh with the remainder carried (daemon/espi/espi_usage.h): 3432 Wh.
    TempDir other;
    WriteFile(other.path() / "site.toml", kSite);
    Run imported =
        Ampledger("espi-import -c " + other.File("site.toml") + " " + dir.File("home.xml"));
    CHECK(imported.exit_code == 0);
    CHECK(imported.output.find("3.432 kWh delivered; 92 intervals added") != std::string::npos);
    CHECK(testing::QueryDouble(other.File("site.db"), "SELECT sum(wh) FROM main_meter_interval") ==
          3432);

    Run bad = Ampledger("espi-export " + config + " --unit nobody --from 2012-03-11 --to 2012-03-12");
    CHECK(bad.exit_code == 2);
    CHECK(bad.output == "ampledger espi-export: --unit: no unit \"nobody\" in the config\n");
    Run off_grid = Ampledger("espi-export " + config +
                             " --unit home --from 2012-03-11T00:07:00-05:00 --to 2012-03-12");
    CHECK(off_grid.exit_code == 2);
    CHECK(off_grid.output.rfind("ampledger espi-export: --from: is not the start of a 15-minute",
                                0) == 0);
  }
}

}  // namespace
}  // namespace ampledger
