// api/route_zone.h
// The site's time zone as the route files hold it: looked up once when routes are added, and
// shared by their handlers; a zone the tz database lacks is an error each handler answers.
// Immutable after LookUp(); any thread.
#pragma once

#include <memory>
#include <optional>

#include "config/config.h"
#include "daemon/metering/local_time.h"

namespace ampledger {

struct RouteZone {
  std::optional<LocalTime> zone;
  Status error;  // why `zone` is empty

  static std::shared_ptr<const RouteZone> LookUp(const Config& config) {
    auto site = std::make_shared<RouteZone>();
    Result<LocalTime> zone = LocalTime::ForZone(config.site.time_zone);
    if (zone.ok()) {
      site->zone = *zone;
    } else {
      site->error = zone.status();
    }
    return site;
  }
};

}  // namespace ampledger
