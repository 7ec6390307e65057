// api/rfc3339.h
// Strict RFC 3339 (section 5.6 "date-time") times for the API: parsing what clients send and
// formatting instants in the site's local time with its offset. Pure functions; any thread.
#pragma once

#include <optional>
#include <string>
#include <string_view>

#include "daemon/metering/local_time.h"
#include "daemon/metering/reading.h"

namespace ampledger {

// Parses "2026-03-08T00:00:00-06:00" (also "Z", lower-case "t"/"z", and fractional seconds
// up to milliseconds). A time offset is required: a time without one names no instant. Rejects
// out-of-range fields (month 13, February 30, hour 24, offset beyond 23:59) and leap seconds
// (second 60: UnixMs has none). nullopt when `text` is not such a time.
std::optional<UnixMs> ParseRfc3339(std::string_view text);

// `instant` as the site's wall clock with its UTC offset: "2026-03-08T03:00:00-05:00";
// milliseconds are written only when not zero; offset zero is written "Z".
std::string FormatLocalRfc3339(const LocalTime& zone, UnixMs instant);

}  // namespace ampledger
