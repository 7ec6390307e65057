// storage/alert_queries.cpp
#include "storage/alert_queries.h"

namespace ampledger {

namespace {

constexpr std::string_view kEventColumns =
    "e.id, e.at_ms, e.recorded_ms, e.kind, e.rule, e.subject, e.reason, e.value_json, e.by, "
    "e.silenced";

// Reads the kEventColumns starting at `first`.
StoredEvent EventAt(const Statement& statement, int first) {
  StoredEvent event;
  event.id = statement.Int(first);
  event.at_ms = statement.Int(first + 1);
  event.recorded_ms = statement.Int(first + 2);
  event.kind = statement.Text(first + 3);
  event.rule = statement.Text(first + 4);
  event.subject = statement.Text(first + 5);
  event.reason = statement.Text(first + 6);
  event.value_json = statement.Text(first + 7);
  event.by = statement.Text(first + 8);
  event.silenced = statement.Int(first + 9) != 0;
  return event;
}

}  // namespace

Result<std::vector<StoredEvent>> ReadEventsAfter(const Database& db, std::int64_t after,
                                                 int limit) {
  Result<Statement> select = db.Prepare("SELECT " + std::string(kEventColumns) +
                                        " FROM alert_event e WHERE e.id > ?1 ORDER BY e.id "
                                        "LIMIT ?2");
  if (!select.ok()) return select.status();
  select->Bind(1, after);
  select->Bind(2, static_cast<std::int64_t>(limit));
  std::vector<StoredEvent> events;
  for (;;) {
    Result<bool> row = select->Step("read alert events");
    if (!row.ok()) return row.status();
    if (!row.value()) return events;
    events.push_back(EventAt(*select, 0));
  }
}

Result<StoredEvent> ReadEvent(const Database& db, std::int64_t id) {
  Result<std::vector<StoredEvent>> events = ReadEventsAfter(db, id - 1, 1);
  if (!events.ok()) return events.status();
  if (events->empty() || events->front().id != id) {
    return Status::NotFound("no alert event " + std::to_string(id));
  }
  return events->front();
}

Result<std::vector<ActiveAlert>> ReadActiveAlerts(const Database& db) {
  Result<Statement> select = db.Prepare(
      "SELECT a.rule, a.subject, a.raised_ms, coalesce(a.acked_ms, 0), "
      "coalesce(a.acked_by, ''), coalesce(a.silenced_until_ms, 0), " +
      std::string(kEventColumns) +
      " FROM alert a JOIN alert_event e ON e.id = a.condition_event WHERE a.active = 1 "
      "ORDER BY a.raised_ms, a.rule, a.subject");
  if (!select.ok()) return select.status();
  std::vector<ActiveAlert> alerts;
  for (;;) {
    Result<bool> row = select->Step("read active alerts");
    if (!row.ok()) return row.status();
    if (!row.value()) return alerts;
    ActiveAlert alert;
    alert.rule = select->Text(0);
    alert.subject = select->Text(1);
    alert.raised_ms = select->Int(2);
    alert.acked_ms = select->Int(3);
    alert.acked_by = select->Text(4);
    alert.silenced_until_ms = select->Int(5);
    alert.condition = EventAt(*select, 6);
    alerts.push_back(std::move(alert));
  }
}

Result<bool> AlertExists(const Database& db, const std::string& rule,
                         const std::string& subject) {
  Result<Statement> select = db.Prepare("SELECT 1 FROM alert WHERE rule = ?1 AND subject = ?2");
  if (!select.ok()) return select.status();
  select->Bind(1, std::string_view(rule));
  select->Bind(2, std::string_view(subject));
  return select->Step("look up alert");
}

Result<std::vector<OutboxEntry>> ReadWaitingDeliveries(const Database& db,
                                                       const std::string& hook, int limit) {
  Result<Statement> select = db.Prepare(
      "SELECT event, attempts, next_ms FROM webhook_outbox WHERE hook = ?1 ORDER BY event "
      "LIMIT ?2");
  if (!select.ok()) return select.status();
  select->Bind(1, std::string_view(hook));
  select->Bind(2, static_cast<std::int64_t>(limit));
  std::vector<OutboxEntry> due;
  for (;;) {
    Result<bool> row = select->Step("read webhook outbox");
    if (!row.ok()) return row.status();
    if (!row.value()) return due;
    due.push_back({hook, select->Int(0), static_cast<int>(select->Int(1)), select->Int(2)});
  }
}

Result<UnixMs> NextDeliveryTime(const Database& db, const std::string& hook) {
  Result<Statement> select = db.Prepare(
      "SELECT next_ms FROM webhook_outbox WHERE hook = ?1 ORDER BY event LIMIT 1");
  if (!select.ok()) return select.status();
  select->Bind(1, std::string_view(hook));
  Result<bool> row = select->Step("read webhook outbox");
  if (!row.ok()) return row.status();
  return row.value() ? static_cast<UnixMs>(select->Int(0)) : UnixMs{0};
}

}  // namespace ampledger
