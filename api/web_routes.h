// api/web_routes.h
// The dashboard: GET / (index.html) and GET /static/<file> from the files compiled into the
// binary (api/web_assets.h). They hold no data, so they need no token; every data call the
// page makes carries the bearer token the user typed. Each answer carries a strict
// Content-Security-Policy (scripts and styles only from this origin, no inline script, data
// only from this origin's API), and Cache-Control: no-cache, so an upgraded daemon's page is
// never mixed with an older cached script. Handlers run on the server's worker threads.
#pragma once

#include "api/http_server.h"

namespace ampledger {

void AddWebRoutes(HttpServer& server);

// The Content-Security-Policy every dashboard file is served with (exposed for tests).
extern const char* const kDashboardContentSecurityPolicy;

}  // namespace ampledger
