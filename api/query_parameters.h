// api/query_parameters.h
// Strict reading of the query parameters the range routes share: a time bound given as an
// RFC 3339 time or as a local date of the site, the set of parameters a route knows, and the
// choice between JSON and CSV. Pure functions over the request; any thread.
#pragma once

#include <initializer_list>
#include <string>

#include "api/http_server.h"
#include "config/status.h"
#include "daemon/metering/local_time.h"

namespace ampledger {

// Query parameter `name` as an instant: an RFC 3339 time with a UTC offset
// ("2026-03-08T00:00:00-06:00"), or a local date "YYYY-MM-DD" meaning that day's local midnight
// in `zone` (the first moment of the day that exists, as LocalTime::Day). InvalidArgument
// naming the parameter when it is missing, repeated or neither.
Result<UnixMs> ParseTimeParameter(const HttpRequest& request, const char* name,
                                  const LocalTime& zone);

// InvalidArgument naming the first query parameter that is not in `known`, or that is given
// more than once.
Status CheckParameters(const HttpRequest& request, std::initializer_list<const char*> known);

// True for format=csv, or no format and an Accept header naming text/csv; InvalidArgument when
// format is neither json nor csv.
Result<bool> WantsCsv(const HttpRequest& request);

}  // namespace ampledger
