// storage/alert_queries.h
// Reads of the alert tables for the API and the webhook sender, on a reader connection (or
// the caller's own). Every query is a prepared statement. Any thread, each with its own
// Database.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "config/status.h"
#include "daemon/metering/reading.h"
#include "storage/database.h"

namespace ampledger {

// One row of alert_event.
struct StoredEvent {
  std::int64_t id = 0;
  UnixMs at_ms = 0;
  UnixMs recorded_ms = 0;
  std::string kind;        // AlertEventKindName()
  std::string rule;
  std::string subject;     // "circuit:<id>", "unit:<id>", "node:<id>"
  std::string reason;
  std::string value_json;  // a JSON object of named numbers
  std::string by;          // who acknowledged or silenced; "" for the daemon
  bool silenced = false;
};

// An active alert with the event that describes its condition.
struct ActiveAlert {
  std::string rule;
  std::string subject;
  UnixMs raised_ms = 0;
  UnixMs acked_ms = 0;     // 0 = not acknowledged
  std::string acked_by;
  UnixMs silenced_until_ms = 0;
  StoredEvent condition;   // the raised, changed or silent event
};

// Events with id > `after`, oldest first, at most `limit`.
Result<std::vector<StoredEvent>> ReadEventsAfter(const Database& db, std::int64_t after,
                                                 int limit);

// The event with `id`; NotFound if there is none.
Result<StoredEvent> ReadEvent(const Database& db, std::int64_t id);

// Every active alert, oldest raise first.
Result<std::vector<ActiveAlert>> ReadActiveAlerts(const Database& db);

// A (rule, subject) pair known to the alert table (it has had a state since the rules began).
Result<bool> AlertExists(const Database& db, const std::string& rule, const std::string& subject);

// One webhook delivery waiting in the outbox.
struct OutboxEntry {
  std::string hook;
  std::int64_t event = 0;
  int attempts = 0;
  UnixMs next_ms = 0;
};

// Deliveries waiting for `hook`, oldest event first, at most `limit`. Events go out in order,
// so only the oldest one's next_ms says when the hook is due.
Result<std::vector<OutboxEntry>> ReadWaitingDeliveries(const Database& db,
                                                       const std::string& hook, int limit);

// When `hook` is next due: the oldest waiting delivery's next_ms; 0 when none waits.
Result<UnixMs> NextDeliveryTime(const Database& db, const std::string& hook);

}  // namespace ampledger
