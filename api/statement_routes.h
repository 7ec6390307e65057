// api/statement_routes.h
// Billing routes, priced under the site's tariff schedule (ApiContext::tariffs; a site without
// a tariff answers 404):
//   GET /v1/cycles/current[?unit=ID&at=TIME]  the billing cycle so far and a projection;
//                                   every scope (a unit token: its own unit only)
//   GET /v1/units/{id}/statements/{cycle}[?format=json|html|csv]  one unit's statement
//                                   (RenderStatementJson etc.); admin, viewer and that unit
//   GET /v1/bills/{cycle}[?format=json|text]  the site bill; admin and viewer
// {cycle} is the month its billing cycle starts in, "YYYY-MM", as `ampledger statement
// --cycle` takes it; a cycle that has not begun is a 404. Statements and bills are computed
// by QueryCycleStatements (storage/cycle_query.h) on the request's reader connection and carry
// the tenant-billing notice in every format: billing tenants for energy is regulated in many
// places, and local law decides. Handlers run on the HTTP worker threads.
#pragma once

#include "api/api_routes.h"
#include "api/http_server.h"

namespace ampledger {

void AddStatementRoutes(HttpServer& server, const ApiContext& context);

}  // namespace ampledger
