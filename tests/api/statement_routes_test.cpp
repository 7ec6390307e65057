// tests/api/statement_routes_test.cpp
// /v1/cycles/current, unit statements and the site bill through the real server: the cycle
// so far against the storage rollups priced by the tariff engine (TariffSchedule::PriceEnergy),
// and statements and bills byte for byte as the `statement` command computes and renders them
// (QueryCycleStatements, RenderStatementJson).
#include "api/statement_routes.h"

#include "api/bill_json.h"
#include "api_fixture.h"
#include "daemon/metering/statement_render.h"
#include "storage/cycle_query.h"

namespace ampledger {
namespace {

// The time-of-use energy charge of `circuits` over [from, to), straight from storage and the
// tariff engine.
double EngineCost(ApiFixture& fixture, const std::vector<int>& circuits, UnixMs from, UnixMs to) {
  auto reader = std::move(Database::OpenReader(fixture.config.storage.path).value());
  const LocalTime local = LocalTime::ForZone("America/Chicago").value();
  std::vector<BucketEnergy> energy;
  for (int circuit : circuits) {
    Result<std::vector<CircuitBucket>> buckets =
        ReadCircuitBuckets(*reader, fixture.series, circuit, from, to);
    REQUIRE(buckets.ok());
    for (const CircuitBucket& bucket : *buckets) {
      energy.push_back({bucket.start_ms, bucket.real_wh / 1000});
    }
  }
  Result<std::vector<ScheduledCharges>> charges = fixture.tariffs.PriceEnergy(local, energy);
  REQUIRE(charges.ok());
  double cost = 0;
  for (const ScheduledCharges& part : *charges) {
    for (const EnergyCharge& line : part.lines) cost += line.amount;
  }
  return cost;
}

TEST_SUITE("api") {
  TEST_CASE_FIXTURE(ApiFixture, "current cycle: so far from the rollups and the tariff engine; "
                                "projected linearly") {
    const UnixMs start = At("2026-03-01T00:00:00-06:00");
    const UnixMs end = At("2026-04-01T00:00:00-05:00");
    const UnixMs at = At("2026-03-09T12:00:00-05:00");
    json cycle = GetJson("/v1/cycles/current?unit=a&at=2026-03-09T12:00:00-05:00", viewer);
    CHECK(cycle["cycle"] == "2026-03");
    CHECK(cycle["from"] == "2026-03-01T00:00:00-06:00");
    CHECK(cycle["to"] == "2026-04-01T00:00:00-05:00");
    CHECK(cycle["at"] == "2026-03-09T12:00:00-05:00");
    CHECK(cycle["zone"] == "America/Chicago");
    CHECK(cycle["currency"] == "USD");
    CHECK(cycle["unit"] == "a");
    const double elapsed = static_cast<double>(at - start) / static_cast<double>(end - start);
    CHECK(cycle["elapsed_fraction"] == doctest::Approx(elapsed).epsilon(1e-12));
    const double kwh = RollupWh({0, 1}, start, at) / 1000;
    REQUIRE(kwh > 0);
    CHECK(cycle["kwh_so_far"] == doctest::Approx(kwh).epsilon(1e-12));
    const double cost = EngineCost(*this, {0, 1}, start, at);
    CHECK(cycle["cost_so_far"] == doctest::Approx(cost).epsilon(1e-12));
    CHECK(cycle["projected_kwh"] == doctest::Approx(kwh / elapsed).epsilon(1e-12));
    CHECK(cycle["projected_cost"] == doctest::Approx(cost / elapsed).epsilon(1e-12));
    CHECK(cycle["units"]["cost_so_far"] == "USD");

    // A unit token asks about its own unit; a whole-site token about every circuit.
    json own = GetJson("/v1/cycles/current?at=2026-03-09T12:00:00-05:00", unit_b);
    CHECK(own["unit"] == "b");
    CHECK(own["kwh_so_far"] == doctest::Approx(RollupWh({2}, start, at) / 1000).epsilon(1e-12));
    json site = GetJson("/v1/cycles/current?at=2026-03-09T12:00:00-05:00", admin);
    CHECK(site["unit"].is_null());
    CHECK(site["cost_so_far"] ==
          doctest::Approx(EngineCost(*this, {0, 1, 2, 3}, start, at)).epsilon(1e-12));
    // Only whole quarter hours count; at the very start nothing is projected.
    json partial = GetJson("/v1/cycles/current?at=2026-03-09T12:07:00-05:00", admin);
    CHECK(partial["kwh_so_far"] == site["kwh_so_far"]);
    json first = GetJson("/v1/cycles/current?at=2026-03-01", admin);
    CHECK(first["elapsed_fraction"] == 0.0);
    CHECK(first["projected_kwh"].is_null());
    CHECK(first["projected_cost"].is_null());
  }

  TEST_CASE_FIXTURE(ApiFixture, "statements and the site bill are what the statement command "
                                "computes, with the tenant-billing notice in every format") {
    auto reader = std::move(Database::OpenReader(config.storage.path).value());
    const LocalTime local = LocalTime::ForZone("America/Chicago").value();
    Result<CycleStatements> cycle =
        QueryCycleStatements(*reader, series, config, tariffs, local, date::year{2026} / 3);
    REQUIRE(cycle.ok());
    const UnitStatement& of_a = cycle->units[0];
    REQUIRE(of_a.unit_id == "a");

    httplib::Result statement = Get("/v1/units/a/statements/2026-03", unit_a);
    REQUIRE(statement);
    CHECK(statement->status == 200);
    CHECK(statement->body == RenderStatementJson(*cycle, of_a, config.site.name, "USD"));
    json parsed = json::parse(statement->body);
    CHECK(parsed["notice"] == kTenantBillingNotice);
    CHECK(parsed["unit"]["id"] == "a");
    CHECK(parsed["total"] == FormatCents(of_a.total));

    httplib::Result html = Get("/v1/units/a/statements/2026-03?format=html", viewer);
    REQUIRE(html);
    CHECK(html->get_header_value("Content-Type") == "text/html; charset=utf-8");
    CHECK(html->body == RenderStatementsHtml(*cycle, {&of_a}, config.site.name, "USD"));
    CHECK(html->body.find("regulated in many places") != std::string::npos);
    httplib::Result csv = Get("/v1/units/a/statements/2026-03?format=csv", admin);
    REQUIRE(csv);
    CHECK(csv->body == RenderStatementCsv(of_a));
    CHECK(csv->body.find("\r\nnotice,") != std::string::npos);

    json bill = GetJson("/v1/bills/2026-03", viewer);
    CHECK(bill["cycle"] == json{{"name", "2026-03"}, {"first_day", "2026-03-01"},
                                {"next_first_day", "2026-04-01"}});
    CHECK(bill["total"] == FormatCents(cycle->site.total));
    REQUIRE(bill["lines"].size() == cycle->site.lines.size());
    // The site bill's lines: energy per period, the adder, the fixed charge, then the tax.
    CHECK(bill["lines"][0]["kind"] == "energy");
    CHECK(bill["lines"].back()["kind"] == "adjustment");
    CHECK(bill["lines"].back()["unit_price"].is_null());
    CHECK(bill["lines"].back()["quantity"] == 5.0);
    CHECK(bill["notice"] == kTenantBillingNotice);
    CHECK(bill["tariffs"][0]["name"] == "maple-tou");
    // The units' statements add up to the site bill to the cent (daemon/metering/statement.h).
    Micros sum = 0;
    for (const UnitStatement& unit : cycle->units) sum += unit.total;
    CHECK(sum == cycle->site.total);
    httplib::Result text = Get("/v1/bills/2026-03?format=text", admin);
    REQUIRE(text);
    CHECK(text->get_header_value("Content-Type") == "text/plain; charset=utf-8");
    CHECK(text->body.find(kTenantBillingNotice) != std::string::npos);
  }
}

}  // namespace
}  // namespace ampledger
