// api/series_route.h
// GET /v1/circuits/{id}/series and GET /v1/units/{id}/series: energy per period of a step in
// the site's local time, as JSON (default) or CSV (RFC 4180; Accept: text/csv or
// ?format=csv). Query: from, to (RFC 3339 with offset, or local dates of the site), step
// (raw, 15m, hour, day, month; default hour), format (json, csv). Runs on the HTTP worker
// threads; `db` is the request's own reader connection.
#pragma once

#include <string>
#include <vector>

#include "api/http_server.h"
#include "config/config.h"
#include "daemon/metering/local_time.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {

// What a series is of: one circuit, or a unit's own circuits summed.
struct SeriesSubject {
  const char* kind;           // "circuit" or "unit"
  std::string id;
  std::vector<int> circuits;  // indexes into Config::circuits
};

Result<HttpResponse> AnswerSeries(const HttpRequest& request, const Config& config,
                                  const SeriesMap& series, const LocalTime& zone,
                                  const Database& db, const SeriesSubject& subject);

}  // namespace ampledger
