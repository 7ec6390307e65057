// api/usage_export.h
// A circuit's or a unit's interval energy as an ESPI (Green Button) feed
// (daemon/espi/espi_writer.h): 15-minute or hourly Wh, one IntervalBlock per local day of the
// site, a tenant or owner can take into any tool that reads the standard. What
// `ampledger espi-export` writes and what GET /v1/units/{id}/usage.xml and
// /v1/circuits/{id}/usage.xml answer. A unit's consumption circuits form one series
// (flowDirection forward) and its export circuits another (reverse). Runs on the caller's
// thread with its own reader connection.
#pragma once

#include <string>
#include <vector>

#include "api/http_server.h"
#include "config/config.h"
#include "daemon/metering/local_time.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {

// What is exported: one circuit, or a unit's own circuits.
struct UsageSubject {
  const char* kind;  // "circuit" or "unit"
  std::string id;
  std::vector<int> circuits;  // indexes into Config::circuits
};

struct UsageExportQuery {
  TimeRange range;      // on boundaries of the interval in the site's zone
  int interval_s = 900;  // 900 (15 minutes) or 3600 (local hours)
};

// 900 or 3600; InvalidArgument naming `what` (the parameter or option) otherwise.
Result<int> ParseUsageInterval(const std::string& text, const char* what);

// The feed as XML. Intervals with no stored data are left out (a gap, as ESPI allows).
// InvalidArgument when the range is empty, longer than kMaxUsageExportRangeMs or not on the
// interval's boundaries; database errors as they come. `now_ms` stamps <updated>.
Result<std::string> ExportUsageEspi(const Database& db, const SeriesMap& series,
                                    const Config& config, const LocalTime& zone,
                                    const UsageSubject& subject, const UsageExportQuery& query,
                                    UnixMs now_ms);

// The HTTP answer: query from, to (as the series routes read them) and interval (900 or 3600,
// default 900); application/atom+xml. `db` is the request's reader connection.
Result<HttpResponse> AnswerUsageExport(const HttpRequest& request, const Config& config,
                                       const SeriesMap& series, const LocalTime& zone,
                                       const Database& db, const UsageSubject& subject);

}  // namespace ampledger
