// api/tariff_routes.h
// The site tariff's rates, for every scope (prices are the same for every tenant):
//   GET /v1/tariff/now[?at=TIME]      the rate in force at a moment (default now), until when,
//                                     and the rate after that
//   GET /v1/tariff/periods?from&to    the rates over a range (at most 31 days), one entry per
//                                     run of quarter hours with the same rate, for a chart
// Prices are quoted as daemon/metering/rate_timeline.h says: the period's time-of-use price
// plus per-kWh adders plus the first tier block's price, before adjustments (taxes), fixed and
// demand charges. A site without a tariff answers 404. Handlers run on the HTTP worker threads.
#pragma once

#include "api/api_routes.h"
#include "api/http_server.h"
#include "daemon/metering/money.h"

namespace ampledger {

void AddTariffRoutes(HttpServer& server, const ApiContext& context);

// The site's tariff schedule, or the NotFound a site without a tariff answers (any route that
// prices energy).
Result<const TariffSchedule*> SiteTariffs(const ApiContext& context);

// Micro-units as a JSON number of currency units (0.1995).
double MoneyNumber(Micros value);

}  // namespace ampledger
