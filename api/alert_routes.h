// api/alert_routes.h
// The alert routes under /v1, added by AddApiRoutes when the service runs alert rules:
//   GET  /v1/alerts                                     active alerts
//   GET  /v1/events?after=ID&wait=S&limit=N              events after a cursor; long-poll
//   POST /v1/alerts/{rule}/{circuit|unit|node}/{id}/acknowledge
//   POST /v1/alerts/{rule}/{circuit|unit|node}/{id}/silence   body {"seconds": N}
// Shapes are documented in api/ALERTS.md. Every route needs a token. A unit token sees only
// alerts and events of its own unit and of the circuits it owns; anything else is a 404 as if
// it did not exist. A viewer token reads but may not acknowledge or silence (403).
// Handlers run on the HTTP worker threads; a long-poll waits on the recorder's EventFeed
// (a condition variable), and at most MaxEventWaiters() wait at once (503 + Retry-After).
#pragma once

#include "api/api_routes.h"
#include "api/http_server.h"

namespace ampledger {

// Precondition: context.alerts != nullptr.
void AddAlertRoutes(HttpServer& server, const ApiContext& context);

}  // namespace ampledger
