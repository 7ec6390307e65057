// api/site_time_text.h
// A moment as a person types it for the site: RFC 3339 with an offset, the site's local wall
// time "YYYY-MM-DD HH:MM" (or with a "T"), or a local date "YYYY-MM-DD" meaning its local
// midnight. What `ampledger meter-read add` and POST /v1/main-meter/reads take. Pure; any
// thread.
#pragma once

#include <string>

#include "config/status.h"
#include "daemon/metering/reading.h"

namespace ampledger {

// InvalidArgument saying what is accepted, or that the local time is skipped or repeated by
// the clocks in `zone_name` (an IANA zone); the message does not name the field.
Result<UnixMs> ParseSiteTime(const std::string& text, const std::string& zone_name);

}  // namespace ampledger
