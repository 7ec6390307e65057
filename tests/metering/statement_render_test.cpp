// tests/metering/statement_render_test.cpp
#include "daemon/metering/statement_render.h"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

namespace ampledger {
namespace {

UnitStatement Sample() {
  UnitStatement statement;
  statement.unit_id = "upper";
  statement.unit_name = "Upper flat";
  statement.lines = {
      {StatementSection::kOwn, "Energy, on-peak", "", 12.5, "kWh", 214'000, 2'680'000},
      {StatementSection::kShared, "Shared circuit: laundry, \"basement\"", "fixed shares, 70%",
       21.7, "kWh", 0, 3'100'000},
      {StatementSection::kCommon, "Service charge", "equal split among 2 units", 31, "day",
       450'000, 6'980'000}};
  statement.total = 12'760'000;
  return statement;
}

TEST_SUITE("metering") {
  // RFC 4180 section 2: CRLF record ends; a field holding a comma or quote is quoted and an
  // inner quote doubled.
  TEST_CASE("CSV follows RFC 4180") {
    CHECK(RenderStatementCsv(Sample()) ==
          "section,description,method,quantity,unit,unit_price,amount\r\n"
          "own,\"Energy, on-peak\",,12.5,kWh,0.214,2.68\r\n"
          "shared,\"Shared circuit: laundry, \"\"basement\"\"\",\"fixed shares, 70%\",21.7,kWh,,3.10\r\n"
          "common,Service charge,equal split among 2 units,31,day,0.45,6.98\r\n"
          "total,,,,,,12.76\r\n"
          "notice," + std::string(kTenantBillingNotice) + ",,,,,\r\n");
  }

  TEST_CASE("the text statement shows lines, total, ratio and the tenant-billing notice") {
    CycleStatements cycle;
    cycle.site.cycle.first_day = date::year{2026} / 3 / 5;
    cycle.site.cycle.next_first_day = date::year{2026} / 4 / 5;
    cycle.site.total = 20'000'000;
    cycle.submetered_import_kwh = 950;
    cycle.main_meter_kwh = 1000;
    cycle.submetered_ratio = 0.95;
    std::string text = RenderStatementText(cycle, Sample(), "Tannery Street duplex", "USD");
    CHECK(text.rfind("Tannery Street duplex: Upper flat (upper)\nBilling cycle 2026-03-05 to "
                     "2026-04-05 (exclusive), amounts in USD\n", 0) == 0);
    CHECK(text.find("[fixed shares, 70%]") != std::string::npos);
    CHECK(text.find("12.76\n") != std::string::npos);
    CHECK(text.find("Submetered / main meter: 950.0 / 1000.0 kWh = 95.0%") != std::string::npos);
    CHECK(text.find(kTenantBillingNotice) != std::string::npos);
  }

  // RFC 8259: parsed back with nlohmann-json (a general-purpose JSON library) as the referee.
  TEST_CASE("the JSON statement parses, with exact money strings and escaped text") {
    CycleStatements cycle;
    cycle.site.cycle.first_day = date::year{2026} / 3 / 5;
    cycle.site.cycle.next_first_day = date::year{2026} / 4 / 5;
    cycle.site.total = 20'000'000;
    cycle.tariffs = {{"flat", "Flat \"A\"\tB", date::year{2026} / 3 / 5, date::year{2026} / 4 / 4}};
    cycle.main_meter_basis = "no main meter reads";
    nlohmann::json json = nlohmann::json::parse(
        RenderStatementJson(cycle, Sample(), "Tannery\\Street", "USD"));
    CHECK(json["site"] == "Tannery\\Street");
    CHECK(json["unit"]["id"] == "upper");
    CHECK(json["cycle"]["next_first_day"] == "2026-04-05");
    CHECK(json["tariffs"][0]["title"] == "Flat \"A\"\tB");
    CHECK(json["tariffs"][0]["last_day"] == "2026-04-04");
    REQUIRE(json["lines"].size() == 3);
    CHECK(json["lines"][0]["unit_price"] == "0.214");
    CHECK(json["lines"][1]["unit_price"].is_null());
    CHECK(json["lines"][1]["description"] == "Shared circuit: laundry, \"basement\"");
    CHECK(json["lines"][2]["quantity"] == 31);
    CHECK(json["total"] == "12.76");
    CHECK(json["site_bill"]["total"] == "20.00");
    CHECK(json["main_meter"]["kwh"].is_null());
    CHECK(json["main_meter"]["basis"] == "no main meter reads");
    CHECK(json["notice"] == kTenantBillingNotice);
  }

  TEST_CASE("the HTML page escapes every text and carries the notice") {
    CycleStatements cycle;
    cycle.site.cycle.first_day = date::year{2026} / 3 / 5;
    cycle.site.cycle.next_first_day = date::year{2026} / 4 / 5;
    UnitStatement statement = Sample();
    statement.unit_name = "Flat <b>&</b>";
    std::string html = RenderStatementsHtml(cycle, {&statement}, "O'Brien \"house\"", "USD");
    CHECK(html.rfind("<!DOCTYPE html>\n", 0) == 0);
    CHECK(html.find("<h1>Flat &lt;b&gt;&amp;&lt;/b&gt;</h1>") != std::string::npos);
    CHECK(html.find("O&#39;Brien &quot;house&quot;") != std::string::npos);
    CHECK(html.find("<b>") == std::string::npos);
    CHECK(html.find("Shared circuit: laundry, &quot;basement&quot;") != std::string::npos);
    CHECK(html.find("<td class=\"n\">12.76</td>") != std::string::npos);
    CHECK(html.find("<p class=\"notice\">Billing tenants for energy is regulated in many "
                    "places.") != std::string::npos);
    CHECK(html.find("<script") == std::string::npos);
    CHECK(html.find("http") == std::string::npos);  // nothing loaded from elsewhere
    CHECK(html.find("</html>\n") != std::string::npos);
  }
}

}  // namespace
}  // namespace ampledger
