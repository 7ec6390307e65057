// api/tariff_routes.cpp
#include "api/tariff_routes.h"

#include <memory>
#include <optional>

#include <nlohmann/json.hpp>

#include "api/api_limits.h"
#include "api/query_parameters.h"
#include "api/rfc3339.h"
#include "api/route_zone.h"
#include "config/wall_clock.h"
#include "daemon/metering/rate_timeline.h"

namespace ampledger {
namespace {

using nlohmann::json;

std::string PricePerKwhUnit(const ApiContext& context) {
  return context.config->site.currency + "/kWh";
}

Result<HttpResponse> TariffNow(const ApiContext& context, const LocalTime& zone,
                               const HttpRequest& request) {
  if (Status known = CheckParameters(request, {"at"}); !known.ok()) return known;
  Result<const TariffSchedule*> tariffs = SiteTariffs(context);
  if (!tariffs.ok()) return tariffs.status();
  UnixMs at = WallClockMs();
  if (request.Query("at") != nullptr) {
    Result<UnixMs> given = ParseTimeParameter(request, "at", zone);
    if (!given.ok()) return given.status();
    at = *given;
  }
  const RateNow rate = RateAt(**tariffs, zone, at, kRateChangeHorizonMs);
  json next = nullptr;
  if (rate.next) {
    next = {{"tariff", rate.next->tariff->name},
            {"season", rate.next->season},
            {"period", rate.next->period},
            {"price_per_kwh", MoneyNumber(rate.next->price_per_kwh)}};
  }
  const bool changes = rate.current.range.end_ms != 0;
  json body = {{"zone", zone.zone_name()},
               {"currency", context.config->site.currency},
               {"tariff", rate.current.tariff->name},
               {"title", rate.current.tariff->tariff.rates().name},
               {"at", FormatLocalRfc3339(zone, at)},
               {"season", rate.current.season},
               {"period", rate.current.period},
               {"price_per_kwh", MoneyNumber(rate.current.price_per_kwh)},
               {"until", changes ? json(FormatLocalRfc3339(zone, rate.current.range.end_ms))
                                 : json(nullptr)},
               {"next", next},
               {"units", {{"price_per_kwh", PricePerKwhUnit(context)}}}};
  return HttpResponse::Json(body.dump());
}

Result<HttpResponse> TariffPeriods(const ApiContext& context, const LocalTime& zone,
                                   const HttpRequest& request) {
  if (Status known = CheckParameters(request, {"from", "to"}); !known.ok()) return known;
  Result<const TariffSchedule*> tariffs = SiteTariffs(context);
  if (!tariffs.ok()) return tariffs.status();
  Result<UnixMs> from = ParseTimeParameter(request, "from", zone);
  if (!from.ok()) return from.status();
  Result<UnixMs> to = ParseTimeParameter(request, "to", zone);
  if (!to.ok()) return to.status();
  for (const auto& [name, instant] : {std::pair<const char*, UnixMs>{"from", *from},
                                      std::pair<const char*, UnixMs>{"to", *to}}) {
    if (((instant % kMsPerBucket) + kMsPerBucket) % kMsPerBucket != 0) {
      return Status::InvalidArgument(std::string("query parameter \"") + name +
                                     "\": rates change only on quarter hours, so the time "
                                     "must fall on one (minute 00, 15, 30 or 45 in UTC)");
    }
  }
  if (*to <= *from) {
    return Status::InvalidArgument("query parameter \"to\": must be later than \"from\"");
  }
  if (*to - *from > kMaxTariffPeriodsRangeMs) {
    return Status::InvalidArgument("query parameter \"to\": the range is longer than " +
                                   std::to_string(kMaxTariffPeriodsRangeMs / 86400000) +
                                   " days; ask for it in parts");
  }
  Result<std::vector<RateInterval>> intervals =
      RateIntervals(**tariffs, zone, TimeRange{*from, *to});
  if (!intervals.ok()) return intervals.status();
  json periods = json::array();
  for (const RateInterval& interval : *intervals) {
    periods.push_back({{"from", FormatLocalRfc3339(zone, interval.range.start_ms)},
                       {"to", FormatLocalRfc3339(zone, interval.range.end_ms)},
                       {"tariff", interval.tariff->name},
                       {"season", interval.season},
                       {"period", interval.period},
                       {"price_per_kwh", MoneyNumber(interval.price_per_kwh)}});
  }
  json body = {{"zone", zone.zone_name()},
               {"currency", context.config->site.currency},
               {"from", FormatLocalRfc3339(zone, *from)},
               {"to", FormatLocalRfc3339(zone, *to)},
               {"periods", periods},
               {"units", {{"price_per_kwh", PricePerKwhUnit(context)}}}};
  return HttpResponse::Json(body.dump());
}

}  // namespace

Result<const TariffSchedule*> SiteTariffs(const ApiContext& context) {
  if (context.tariffs == nullptr || context.tariffs->empty()) {
    return Status::NotFound("the site has no tariff (site.tariff in the config), so nothing "
                            "is priced");
  }
  return context.tariffs;
}

double MoneyNumber(Micros value) { return static_cast<double>(value) / kMicrosPerUnit; }

void AddTariffRoutes(HttpServer& server, const ApiContext& context) {
  std::shared_ptr<const RouteZone> site = RouteZone::LookUp(*context.config);
  server.Route("GET", "/v1/tariff/now",
               RequireToken(context, [context, site](const HttpRequest& request,
                                                     const Database&,
                                                     const Scope&) -> Result<HttpResponse> {
                 if (!site->zone) return site->error;
                 return TariffNow(context, *site->zone, request);
               }));
  server.Route("GET", "/v1/tariff/periods",
               RequireToken(context, [context, site](const HttpRequest& request,
                                                     const Database&,
                                                     const Scope&) -> Result<HttpResponse> {
                 if (!site->zone) return site->error;
                 return TariffPeriods(context, *site->zone, request);
               }));
}

}  // namespace ampledger
