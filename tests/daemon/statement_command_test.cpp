// tests/daemon/statement_command_test.cpp
// `ampledger meter-read` and `ampledger statement` as a person runs them: the built binary on
// a real SQLite database in a temporary folder, holding a month of 15-minute rollups and main
// meter reads typed in through the command. Expected amounts are computed by hand below.
#include <doctest/doctest.h>
#include <nlohmann/json.hpp>
#include <sys/wait.h>

#include <cstdio>
#include <filesystem>
#include <string>

#include "config/config.h"
#include "daemon/espi/espi_usage.h"
#include "daemon/espi/espi_writer.h"
#include "daemon/metering/reading.h"
#include "storage/database.h"
#include "storage/series.h"
#include "test_util.h"

namespace ampledger {
namespace {

using testing::AmpledgerBinary;
using testing::TempDir;
using testing::WriteFile;

struct Run {
  int exit_code = -1;
  std::string output;  // stdout (and stderr when `with_errors`)
};

Run Ampledger(const std::string& arguments, bool with_errors = true) {
  Run run;
  std::string command =
      AmpledgerBinary() + " " + arguments + (with_errors ? " 2>&1" : " 2>/dev/null");
  FILE* pipe = ::popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  char buffer[4096];
  size_t count;
  while ((count = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) run.output.append(buffer, count);
  int status = ::pclose(pipe);
  run.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return run;
}

bool Contains(const std::string& text, const std::string& part) {
  return text.find(part) != std::string::npos;
}

// Two flats with one circuit each, shared hall lights, the remainder split equally; a flat
// tariff: 0.20 per kWh and a service charge of 5.00 per cycle. UTC keeps the arithmetic plain.
const char* kSite = R"(
[site]
name = "Ropewalk Lane pair"
time_zone = "UTC"
nominal_volts = [230]
tariff = "flat"
[[node]]
id = "panel"
auth = "plain"
[[node.channel]]
id = "ct1"
[[node.channel]]
id = "ct2"
[[node.channel]]
id = "ct3"
[[circuit]]
id = "a-sockets"
channels = ["panel/ct1"]
[[circuit]]
id = "b-sockets"
channels = ["panel/ct2"]
[[circuit]]
id = "hall"
channels = ["panel/ct3"]
[[unit]]
id = "a"
name = "Flat A"
circuits = ["a-sockets"]
[[unit]]
id = "b"
name = "Flat B"
circuits = ["b-sockets"]
[[shared]]
circuit = "hall"
[remainder]
rule = "equal"
[storage]
path = "site.db"
)";

const char* kFlatTariff = R"(
name = "Flat test rate"
currency = "USD"
[[season]]
name = "all year"
from = "01-01"
to = "12-31"
default_period = "all hours"
[[season.period]]
name = "all hours"
price = 0.20
[[fixed]]
name = "Service charge"
amount = 5.00
per = "cycle"
)";

// Every 15-minute bucket of March 2026 (UTC): a-sockets 125 Wh (500 W), b-sockets 250 Wh
// (1 kW), hall 25 Wh (100 W), fully covered and measured.
void FillMarch(const Config& config) {
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  REQUIRE_MESSAGE(db.ok(), db.status().ToString());
  Result<SeriesMap> series = RegisterSeries(**db, config);
  REQUIRE(series.ok());
  REQUIRE((*db)->Exec("BEGIN", "fill").ok());
  Result<Statement> insert = (*db)->Prepare(
      "INSERT INTO rollup (circuit, bucket, real_wh, apparent_vah, min_w, max_w, coverage, "
      "quality) VALUES (?1, ?2, ?3, ?3, ?4, ?4, 1, 0)");
  REQUIRE(insert.ok());
  const UnixMs march = 1'772'323'200'000;  // 2026-03-01T00:00:00Z
  const double wh[] = {125, 250, 25};
  for (int k = 0; k < 31 * 96; ++k) {
    for (int c = 0; c < 3; ++c) {
      insert->Bind(1, series->circuit_ids[c]);
      insert->Bind(2, static_cast<std::int64_t>(march + k * kMsPerBucket));
      insert->Bind(3, wh[c]);
      insert->Bind(4, wh[c] * 4);
      REQUIRE(insert->Run("insert rollup").ok());
    }
  }
  REQUIRE((*db)->Exec("COMMIT", "fill").ok());
}

struct Site {
  TempDir dir;
  std::string config_path;
  Site() {
    std::filesystem::create_directories(dir.path() / "tariffs");
    WriteFile(dir.path() / "tariffs" / "flat.toml", kFlatTariff);
    WriteFile(dir.path() / "site.toml", kSite);
    config_path = dir.File("site.toml");
  }
  std::string Config() const { return " -c " + config_path; }
};

TEST_SUITE("daemon") {
  TEST_CASE("meter-read: add, list, a refused read stores nothing, remove") {
    Site site;
    Run added = Ampledger("meter-read add" + site.Config() +
                          " --register 10000 --at 2026-03-01T00:00:00Z --source 'meter photo'");
    CHECK(added.exit_code == 0);
    CHECK(added.output == "main meter read 1 stored\n");
    // Local time in the site's zone (UTC here) and a date alone both work.
    CHECK(Ampledger("meter-read add" + site.Config() + " --register 11250 --at '2026-04-01 00:00'")
              .exit_code == 0);
    CHECK(Ampledger("meter-read add" + site.Config() +
                    " --kwh 300 --from 2026-01-01 --to 2026-02-01 --source 'utility bill'")
              .exit_code == 0);
    Run backwards = Ampledger("meter-read add" + site.Config() +
                              " --register 9000 --at 2026-03-15T12:00:00Z");
    CHECK(backwards.exit_code == 2);
    CHECK(backwards.output ==
          "ampledger: meter-read add: refused, nothing stored: register 9000 kWh at "
          "2026-03-15T12:00:00Z would make the register count backwards against the register "
          "read at 2026-03-01T00:00:00Z (read 1) of 10000 kWh\n");
    Run bad_time = Ampledger("meter-read add" + site.Config() + " --register 1 --at yesterday");
    CHECK(bad_time.exit_code == 2);
    CHECK(bad_time.output ==
          "ampledger: meter-read add: --at: \"yesterday\" is not a time: give RFC 3339 with an "
          "offset (2026-03-05T08:10:00-06:00), local \"2026-03-05 08:10\" or a date "
          "\"2026-03-05\"\n");
    CHECK(Ampledger("meter-read add" + site.Config() + " --register 1").exit_code == 2);
    Run list = Ampledger("meter-read list" + site.Config());
    CHECK(list.exit_code == 0);
    CHECK(list.output ==
          "id\tkind\tfrom\tat\tkwh\tsource\n"
          "3\tperiod\t2026-01-01T00:00:00Z\t2026-02-01T00:00:00Z\t300\tutility bill\n"
          "1\tregister\t-\t2026-03-01T00:00:00Z\t10000\tmeter photo\n"
          "2\tregister\t-\t2026-04-01T00:00:00Z\t11250\ttyped in\n");
    CHECK(Ampledger("meter-read remove" + site.Config() + " 3").output ==
          "main meter read 3 removed\n");
    Run again = Ampledger("meter-read remove" + site.Config() + " 3");
    CHECK(again.exit_code == 2);
    CHECK(again.output == "ampledger: meter-read remove: no main meter read 3\n");
  }

  TEST_CASE("statement: one unit's statement in text, JSON, CSV and HTML from a real database") {
    Site site;
    Result<Config> config = LoadConfig(site.config_path);
    REQUIRE_MESSAGE(config.ok(), config.status().ToString());
    FillMarch(*config);
    REQUIRE(Ampledger("meter-read add" + site.Config() +
                      " --register 10000 --at 2026-03-01T00:00:00Z").exit_code == 0);
    REQUIRE(Ampledger("meter-read add" + site.Config() +
                      " --register 11250 --at 2026-04-01T00:00:00Z").exit_code == 0);
    // Hand computation, March 2026 = 744 h:
    //   a-sockets 0.5 kW x 744 h = 372 kWh, b-sockets 744 kWh, hall 74.4 kWh (37.2 each);
    //   main meter 11250 - 10000 = 1250 kWh; remainder 1250 - 1190.4 = 59.6 kWh (29.8 each).
    //   Site bill: 1250 kWh x 0.20 = 250.00 + service charge 5.00 = 255.00.
    //   Flat A: 372 x 0.20 = 74.40, hall 37.2 x 0.20 = 7.44, remainder 29.8 x 0.20 = 5.96,
    //           service 2.50: 90.30.   Flat B: 148.80 + 7.44 + 5.96 + 2.50 = 164.70.
    const std::string base = "statement" + site.Config() + " --cycle 2026-03";

    Run text = Ampledger(base + " --unit a");
    CHECK(text.exit_code == 0);
    CHECK(Contains(text.output, "Ropewalk Lane pair: Flat A (a)\n"));
    CHECK(Contains(text.output, "74.40\n"));
    CHECK(Contains(text.output, "Total"));
    CHECK(Contains(text.output, "90.30\n"));
    CHECK(Contains(text.output, "Site bill 255.00"));
    CHECK(Contains(text.output, "Submetered / main meter: 1190.4 / 1250.0 kWh = 95.2%"));
    CHECK(Contains(text.output, "Tariff 2026-03-01 to 2026-03-31: Flat test rate (flat)"));
    CHECK(Contains(text.output, "Billing tenants for energy is regulated in many places."));
    CHECK(!Contains(text.output, "Flat B"));

    Run json = Ampledger(base + " --unit b --format json", false);
    REQUIRE(json.exit_code == 0);
    nlohmann::json parsed = nlohmann::json::parse(json.output);  // the referee: nlohmann-json
    CHECK(parsed["unit"]["id"] == "b");
    CHECK(parsed["total"] == "164.70");
    CHECK(parsed["site_bill"]["total"] == "255.00");
    CHECK(parsed["main_meter"]["kwh"].get<double>() == doctest::Approx(1250));
    CHECK(parsed["main_meter"]["remainder_kwh"].get<double>() == doctest::Approx(59.6));
    CHECK(parsed["notice"].get<std::string>().rfind("Billing tenants", 0) == 0);
    double sum = 0;
    for (const auto& line : parsed["lines"]) sum += std::stod(line["amount"].get<std::string>());
    CHECK(sum == doctest::Approx(164.70));

    Run csv = Ampledger(base + " --unit b --format csv", false);
    CHECK(csv.exit_code == 0);
    CHECK(csv.output.rfind("section,description,method,quantity,unit,unit_price,amount\r\n", 0) ==
          0);
    CHECK(Contains(csv.output, "own,\"Energy, all hours\",,744,kWh,0.20,148.80\r\n"));
    CHECK(Contains(csv.output, "\r\ntotal,,,,,,164.70\r\n"));
    CHECK(Contains(csv.output, "\r\nnotice,Billing tenants for energy is regulated"));

    Run html = Ampledger(base + " --unit a --format html", false);
    CHECK(html.exit_code == 0);
    CHECK(html.output.rfind("<!DOCTYPE html>", 0) == 0);
    CHECK(Contains(html.output, "<h1>Flat A</h1>"));
    CHECK(Contains(html.output, "90.30"));
    CHECK(!Contains(html.output, "Flat B"));
    CHECK(!Contains(html.output, "164.70"));

    Run all = Ampledger(base);
    CHECK(all.exit_code == 0);
    CHECK(Contains(all.output, "Ropewalk Lane pair: site bill"));
    CHECK(Contains(all.output, "Flat A (a)"));
    CHECK(Contains(all.output, "Flat B (b)"));
    Run all_json = Ampledger(base + " --format json", false);
    CHECK(nlohmann::json::parse(all_json.output).size() == 2);
  }

  TEST_CASE("statement: the main meter's imported interval reads come before typed-in reads") {
    Site site;
    Result<Config> config = LoadConfig(site.config_path);
    REQUIRE_MESSAGE(config.ok(), config.status().ToString());
    FillMarch(*config);
    REQUIRE(Ampledger("meter-read add" + site.Config() +
                      " --register 10000 --at 2026-03-01T00:00:00Z").exit_code == 0);
    REQUIRE(Ampledger("meter-read add" + site.Config() +
                      " --register 11250 --at 2026-04-01T00:00:00Z").exit_code == 0);
    // The utility's hourly file for March 2026 (744 h of 1,700 Wh: 1264.8 kWh), written with
    // the ESPI writer and imported as a person would.
    Result<LocalTime> utc = LocalTime::ForZone("UTC");
    REQUIRE(utc.ok());
    std::vector<MeterInterval> hours;
    const UnixMs march = 1'772'323'200'000;  // 2026-03-01T00:00:00Z
    for (int h = 0; h < 744; ++h) {
      hours.push_back({{march + h * 3'600'000LL, march + (h + 1) * 3'600'000LL}, 1700});
    }
    EspiFeed feed{"utility", {BuildEspiSeries({"meter", "hourly", kEspiFlowForward, 3600, {}}, *utc,
                                              hours)}};
    WriteFile(site.dir.path() / "march.xml", WriteEspiFeed(feed, EspiWriteOptions{}));
    REQUIRE(Ampledger("espi-import" + site.Config() + " " + site.dir.File("march.xml")).exit_code ==
            0);
    // Submeters 1190.4 kWh (as above); remainder 1264.8 - 1190.4 = 74.4 kWh.
    Run json = Ampledger("statement" + site.Config() + " --cycle 2026-03 --unit a --format json",
                         false);
    REQUIRE(json.exit_code == 0);
    const nlohmann::json meter = nlohmann::json::parse(json.output)["main_meter"];
    CHECK(meter["kwh"].get<double>() == doctest::Approx(1264.8));
    CHECK(meter["basis"] == "main meter interval reads");
    CHECK(meter["remainder_kwh"].get<double>() == doctest::Approx(74.4));
  }

  TEST_CASE("statement: bad options and missing pieces are clear errors") {
    Site site;
    const std::string base = "statement" + site.Config();
    Run unit = Ampledger(base + " --cycle 2026-03 --unit c");
    CHECK(unit.exit_code == 2);
    CHECK(unit.output ==
          "ampledger: statement: --unit: " + site.config_path + " has no unit \"c\"\n");
    Run cycle = Ampledger(base + " --cycle 2026-3");
    CHECK(cycle.exit_code == 2);
    CHECK(cycle.output ==
          "ampledger: statement: --cycle: expected the month a cycle starts in, YYYY-MM "
          "(1970-01 or later), got \"2026-3\"\n");
    Run csv = Ampledger(base + " --cycle 2026-03 --format csv");
    CHECK(csv.exit_code == 2);
    CHECK(csv.output ==
          "ampledger: statement: --format csv needs --unit (one statement per file)\n");
    Run format = Ampledger(base + " --cycle 2026-03 --unit a --format pdf");
    CHECK(format.output ==
          "ampledger: statement: --format: expected text, json, csv or html, got \"pdf\"\n");
    Run no_db = Ampledger(base + " --cycle 2026-03 --unit a");
    CHECK(no_db.exit_code == 1);
    CHECK(no_db.output ==
          "ampledger: statement: " + site.dir.File("site.db") + ": no such database\n");
    CHECK(!std::filesystem::exists(site.dir.path() / "site.db"));  // not created by a reader
  }
}

}  // namespace
}  // namespace ampledger
