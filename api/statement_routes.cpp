// api/statement_routes.cpp
#include "api/statement_routes.h"

#include <cstdio>
#include <memory>
#include <optional>

#include <nlohmann/json.hpp>

#include "api/access.h"
#include "api/bill_json.h"
#include "api/energy_cost.h"
#include "api/query_parameters.h"
#include "api/rfc3339.h"
#include "api/route_zone.h"
#include "api/tariff_routes.h"
#include "config/wall_clock.h"
#include "daemon/metering/statement_render.h"
#include "storage/cycle_query.h"
#include "storage/queries.h"

namespace ampledger {
namespace {

using nlohmann::json;

// The billing cycle path parameter names: "YYYY-MM", 1970-01 or later, begun by `now`.
Result<BillingCycle> ParseCycle(const ApiContext& context, const LocalTime& zone,
                                const std::string& text, UnixMs now) {
  std::optional<date::year_month> month = ParseCycleMonth(text);
  if (!month) {
    return Status::InvalidArgument("path parameter \"cycle\": \"" + text +
                                   "\" is not a billing cycle: give the month it starts in as "
                                   "YYYY-MM, 1970-01 or later (e.g. 2026-03)");
  }
  Result<BillingCycle> cycle = zone.CycleStarting(context.config->site.billing_cycle_day, *month);
  if (!cycle.ok()) return cycle.status();
  if (cycle->range.start_ms > now) {
    return Status::NotFound("no billing cycle " + text + " yet: it begins " +
                            FormatLocalRfc3339(zone, cycle->range.start_ms));
  }
  return cycle;
}

// The circuits a cycle summary covers: one unit's own, or every circuit the scope sees.
Result<std::vector<int>> CycleCircuits(const Config& config, const Scope& scope,
                                       const std::string* unit_id) {
  if (unit_id == nullptr) return VisibleCircuits(config, scope);
  const int unit = VisibleUnit(config, scope, *unit_id);
  if (unit < 0) return Status::NotFound("no unit \"" + *unit_id + "\"");
  std::vector<int> circuits;
  for (size_t k = 0; k < config.circuits.size(); ++k) {
    if (OwnerOfCircuit(config, static_cast<int>(k)) == unit) circuits.push_back(int(k));
  }
  return circuits;
}

Result<HttpResponse> CurrentCycle(const ApiContext& context, const LocalTime& zone,
                                  const HttpRequest& request, const Database& db,
                                  const Scope& scope) {
  if (Status known = CheckParameters(request, {"unit", "at"}); !known.ok()) return known;
  const Config& config = *context.config;
  const std::string* unit_id = request.Query("unit");
  // A unit token asks about its own unit, named or not.
  if (unit_id == nullptr && !scope.SeesWholeSite()) unit_id = &scope.unit;
  Result<std::vector<int>> circuits = CycleCircuits(config, scope, unit_id);
  if (!circuits.ok()) return circuits.status();
  Result<const TariffSchedule*> tariffs = SiteTariffs(context);
  if (!tariffs.ok()) return tariffs.status();
  UnixMs at = WallClockMs();
  if (request.Query("at") != nullptr) {
    Result<UnixMs> given = ParseTimeParameter(request, "at", zone);
    if (!given.ok()) return given.status();
    at = *given;
  }
  Result<BillingCycle> cycle = zone.CycleContaining(config.site.billing_cycle_day, at);
  if (!cycle.ok()) return cycle.status();
  // Whole quarter hours so far: the energy and the elapsed share cover the same time.
  const UnixMs so_far_end = at - (((at % kMsPerBucket) + kMsPerBucket) % kMsPerBucket);
  const TimeRange range = cycle->range;
  Result<std::vector<std::vector<CircuitBucket>>> buckets =
      ReadBucketsForCircuits(db, *context.series, *circuits, range.start_ms, so_far_end);
  if (!buckets.ok()) return buckets.status();
  Result<EnergyCost> so_far =
      PriceBuckets(**tariffs, zone, ConsumptionBuckets(config, *circuits, *buckets));
  if (!so_far.ok()) return so_far.status();
  const double elapsed =
      static_cast<double>(so_far_end - range.start_ms) / static_cast<double>(range.DurationMs());
  auto projected = [elapsed](double value) {
    return elapsed > 0 ? json(value / elapsed) : json(nullptr);
  };
  json body = {{"cycle", CycleMonthName(cycle->first_day.year() / cycle->first_day.month())},
               {"from", FormatLocalRfc3339(zone, range.start_ms)},
               {"to", FormatLocalRfc3339(zone, range.end_ms)},
               {"at", FormatLocalRfc3339(zone, at)},
               {"zone", zone.zone_name()},
               {"currency", config.site.currency},
               {"unit", unit_id != nullptr ? json(*unit_id) : json(nullptr)},
               {"elapsed_fraction", elapsed},
               {"kwh_so_far", so_far->kwh},
               {"cost_so_far", so_far->cost},
               {"projected_kwh", projected(so_far->kwh)},
               {"projected_cost", projected(so_far->cost)},
               {"units",
                {{"kwh_so_far", "kWh"}, {"projected_kwh", "kWh"},
                 {"cost_so_far", config.site.currency}, {"projected_cost", config.site.currency}}}};
  return HttpResponse::Json(body.dump());
}

// The statements of the cycle the path names, or why not.
Result<CycleStatements> CycleOf(const ApiContext& context, const LocalTime& zone,
                                const std::string& cycle_text, const Database& db) {
  Result<const TariffSchedule*> tariffs = SiteTariffs(context);
  if (!tariffs.ok()) return tariffs.status();
  Result<BillingCycle> cycle = ParseCycle(context, zone, cycle_text, WallClockMs());
  if (!cycle.ok()) return cycle.status();
  return QueryCycleStatements(db, *context.series, *context.config, **tariffs, zone,
                              cycle->first_day.year() / cycle->first_day.month());
}

Result<std::string> Format(const HttpRequest& request, std::initializer_list<const char*> known) {
  const std::string* format = request.Query("format");
  if (format == nullptr) return std::string(*known.begin());
  std::string listed;
  for (const char* name : known) {
    if (*format == name) return *format;
    listed += (listed.empty() ? "" : ", ") + std::string(name);
  }
  return Status::InvalidArgument("query parameter \"format\": \"" + *format + "\" is not " +
                                 listed);
}

HttpResponse Text(std::string body, const char* content_type) {
  HttpResponse response;
  response.content_type = content_type;
  response.body = std::move(body);
  return response;
}

Result<HttpResponse> UnitStatementRoute(const ApiContext& context, const LocalTime& zone,
                                        const HttpRequest& request, const Database& db,
                                        const Scope& scope) {
  if (Status known = CheckParameters(request, {"format"}); !known.ok()) return known;
  const Config& config = *context.config;
  const std::string& unit_id = request.path_params[0];
  if (VisibleUnit(config, scope, unit_id) < 0) {
    return Status::NotFound("no unit \"" + unit_id + "\"");
  }
  Result<std::string> format = Format(request, {"json", "html", "csv"});
  if (!format.ok()) return format.status();
  Result<CycleStatements> cycle = CycleOf(context, zone, request.path_params[1], db);
  if (!cycle.ok()) return cycle.status();
  for (const UnitStatement& statement : cycle->units) {
    if (statement.unit_id != unit_id) continue;
    const std::string& site = config.site.name;
    const std::string& currency = config.site.currency;
    if (*format == "html") {
      return Text(RenderStatementsHtml(*cycle, {&statement}, site, currency),
                  "text/html; charset=utf-8");
    }
    if (*format == "csv") {
      return Text(RenderStatementCsv(statement), "text/csv; charset=utf-8; header=present");
    }
    return HttpResponse::Json(RenderStatementJson(*cycle, statement, site, currency));
  }
  return Status::NotFound("no statement for unit \"" + unit_id + "\" in cycle " +
                          request.path_params[1]);
}

Result<HttpResponse> SiteBillRoute(const ApiContext& context, const LocalTime& zone,
                                   const HttpRequest& request, const Database& db,
                                   const Scope& scope) {
  if (!scope.SeesWholeSite()) return Status::NotFound("no resource at " + request.path);
  if (Status known = CheckParameters(request, {"format"}); !known.ok()) return known;
  Result<std::string> format = Format(request, {"json", "text"});
  if (!format.ok()) return format.status();
  Result<CycleStatements> cycle = CycleOf(context, zone, request.path_params[0], db);
  if (!cycle.ok()) return cycle.status();
  const Config& config = *context.config;
  if (*format == "text") {
    return Text(RenderBillText(cycle->site, config.site.name, config.site.currency) + "\n" +
                    cycle->notice + "\n",
                "text/plain; charset=utf-8");
  }
  const date::year_month_day first_day = cycle->site.cycle.first_day;
  const std::string name = CycleMonthName(first_day.year() / first_day.month());
  return HttpResponse::Json(
      RenderBillJson(*cycle, name, config.site.name, config.site.currency));
}

using SiteHandler = Result<HttpResponse> (*)(const ApiContext&, const LocalTime&,
                                             const HttpRequest&, const Database&, const Scope&);

HttpHandler WithZone(const ApiContext& context, std::shared_ptr<const RouteZone> site,
                     SiteHandler handler) {
  return RequireToken(context, [context, site, handler](const HttpRequest& request,
                                                       const Database& db,
                                                       const Scope& scope) -> Result<HttpResponse> {
    if (!site->zone) return site->error;
    return handler(context, *site->zone, request, db, scope);
  });
}

}  // namespace

void AddStatementRoutes(HttpServer& server, const ApiContext& context) {
  std::shared_ptr<const RouteZone> site = RouteZone::LookUp(*context.config);
  server.Route("GET", "/v1/cycles/current", WithZone(context, site, CurrentCycle));
  server.Route("GET", "/v1/units/([^/]+)/statements/([^/]+)",
               WithZone(context, site, UnitStatementRoute));
  server.Route("GET", "/v1/bills/([^/]+)", WithZone(context, site, SiteBillRoute));
}

}  // namespace ampledger
