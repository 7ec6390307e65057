// api/site_time_text.cpp
#include "api/site_time_text.h"

#include <date/tz.h>

#include <chrono>
#include <cstdio>
#include <optional>

#include "api/rfc3339.h"

namespace ampledger {

Result<UnixMs> ParseSiteTime(const std::string& text, const std::string& zone_name) {
  if (std::optional<UnixMs> instant = ParseRfc3339(text)) return *instant;
  int y = 0, mo = 0, d = 0, h = 0, mi = 0, used = 0;
  char separator = 0;
  bool has_time = std::sscanf(text.c_str(), "%4d-%2d-%2d%c%2d:%2d%n", &y, &mo, &d, &separator,
                              &h, &mi, &used) == 6 &&
                  (separator == ' ' || separator == 'T') && used == int(text.size());
  bool date_only = !has_time &&
                   std::sscanf(text.c_str(), "%4d-%2d-%2d%n", &y, &mo, &d, &used) == 3 &&
                   used == int(text.size());
  date::year_month_day day = date::year{y} / mo / d;
  if ((!has_time && !date_only) || !day.ok() || h > 23 || mi > 59 || h < 0 || mi < 0) {
    return Status::InvalidArgument(
        "\"" + text + "\" is not a time: give RFC 3339 with an offset "
        "(2026-03-05T08:10:00-06:00), local \"2026-03-05 08:10\" or a date \"2026-03-05\"");
  }
  date::local_time<std::chrono::minutes> local =
      date::local_days{day} + std::chrono::hours{h} + std::chrono::minutes{mi};
  try {
    const date::time_zone* zone = date::locate_zone(zone_name);
    auto utc = zone->to_sys(local);  // throws for a time the clocks skip or show twice
    return static_cast<UnixMs>(
        std::chrono::duration_cast<std::chrono::milliseconds>(utc.time_since_epoch()).count());
  } catch (const date::nonexistent_local_time&) {
    return Status::InvalidArgument("\"" + text + "\" does not exist in " + zone_name +
                                   " (the clocks skip it)");
  } catch (const date::ambiguous_local_time&) {
    return Status::InvalidArgument("\"" + text + "\" happens twice in " + zone_name +
                                   "; give it in RFC 3339 with its offset");
  } catch (const std::exception& error) {
    return Status::InvalidArgument(zone_name + ": " + error.what());
  }
}

}  // namespace ampledger
