// api/main_meter_routes.h
// Reads of the site's main (utility) meter, as `ampledger meter-read` keeps them
// (storage/main_meter_store.h); whole-site routes (a unit token gets the 404 of a path that
// does not exist):
//   GET    /v1/main-meter/reads?from&to   reads touching the range (admin, viewer)
//   POST   /v1/main-meter/reads           store one read; 201 with it (admin; viewer 403)
//   DELETE /v1/main-meter/reads/{id}      remove one typed in by mistake; 204 (admin)
// The POST body is a JSON object: {"register_kwh": N, "at": TIME} (the meter's register) or
// {"kwh": N, "from": TIME, "to": TIME} (energy over a period, as a utility bill states it),
// with an optional "source" (1 to 200 bytes on one line, default "typed in"); TIME as
// api/site_time_text.h. No other member is accepted. A read that contradicts the stored ones
// (CheckNewMeterRead) is refused with 400 and nothing is stored. Writes open a connection of
// their own for one short transaction, as the command does. Handlers run on the HTTP worker
// threads.
#pragma once

#include "api/api_routes.h"
#include "api/http_server.h"

namespace ampledger {

void AddMainMeterRoutes(HttpServer& server, const ApiContext& context);

}  // namespace ampledger
