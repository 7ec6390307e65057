// api/event_json.h
// The JSON of one alert event, the same in /v1/events, /v1/alerts and webhook bodies
// (api/ALERTS.md documents it). Pure; any thread.
#pragma once

#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "config/config.h"
#include "daemon/metering/local_time.h"
#include "storage/alert_queries.h"

namespace ampledger {

// {"id", "kind", "rule", "rule_kind", "subject": {"type", "id"}, "at" (RFC 3339 in the site's
// zone), "at_ms", "reason", "values", "by", "silenced"}. `zone` may be empty (times in UTC).
nlohmann::json EventJson(const Config& config, const std::optional<LocalTime>& zone,
                         const StoredEvent& event);

// "circuit:heater" -> {"type": "circuit", "id": "heater"}.
nlohmann::json SubjectJson(const std::string& subject);

}  // namespace ampledger
