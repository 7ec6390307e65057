// api/interop_routes.h
// The routes that exchange data with other tools: GET /v1/units/{id}/usage.xml and
// GET /v1/circuits/{id}/usage.xml (ESPI interval data, api/usage_export.h; every scope, a
// unit token only its own unit and circuits) and GET /v1/reconciliation (main meter against
// the submeters, api/reconciliation_route.h; admin and viewer). Handlers run on the server's
// worker threads.
#pragma once

#include "api/api_routes.h"
#include "api/http_server.h"

namespace ampledger {

void AddInteropRoutes(HttpServer& server, const ApiContext& context);

}  // namespace ampledger
