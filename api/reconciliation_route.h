// api/reconciliation_route.h
// GET /v1/reconciliation: the main (utility) meter against the sum of the submetered circuits,
// per local day or per billing cycle (daemon/metering/reconciliation.h), with the unmetered
// remainder and the calibration ratio. Query: from, to (RFC 3339 with offset, or local dates;
// on boundaries of the periods), per (day, the default, or cycle). Admin and viewer tokens
// only: it is the whole site. Runs on the HTTP worker threads with the request's own reader
// connection.
#pragma once

#include "api/http_server.h"
#include "config/config.h"
#include "daemon/metering/local_time.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {

Result<HttpResponse> AnswerReconciliation(const HttpRequest& request, const Config& config,
                                          const SeriesMap& series, const LocalTime& zone,
                                          const Database& db);

}  // namespace ampledger
