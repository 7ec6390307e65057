// api/webhook_sender.h
// WebhookSender posts every alert event in the outbox (storage: webhook_outbox) to each
// configured [[webhook]], at least once, oldest first per webhook, signed so the receiver can
// check who sent it and when (api/ALERTS.md shows how to verify):
//   POST <url>   Content-Type: application/json   body: the event (api/event_json.h)
//   Ampledger-Event-Id: <event id>     the same on every retry: receivers de-duplicate by it
//   Ampledger-Timestamp: <unix seconds at this attempt>
//   Ampledger-Signature: v1=<lowercase hex HMAC-SHA256(secret, timestamp + "." + body)>
// A 2xx answer delivers it; anything else (refused connection, timeout, 4xx, 5xx) is retried
// after first_retry_ms, doubling each time up to max_retry_ms, with no limit on attempts, so
// nothing is dropped while a receiver is down or misconfigured. The outbox is in SQLite, and
// results are committed through the AlertRecorder (the writer's transactions), so a restart
// resumes where it stopped.
//
// One thread for all webhooks. It sleeps on the recorder's EventFeed until a new event is
// committed or the next retry is due; it never polls. Start(), Stop() from the owner thread.
#pragma once

#include <atomic>
#include <functional>
#include <string>
#include <thread>

#include "config/config.h"
#include "storage/alert_recorder.h"

namespace ampledger {

struct WebhookSenderOptions {
  UnixMs first_retry_ms = 5'000;       // after the first failure
  UnixMs max_retry_ms = 3'600'000;     // the backoff's ceiling: one try an hour at least
  std::function<UnixMs()> clock;       // wall clock, ms since 1970; tests substitute
  // Failed attempts and outbox errors, one line each (the service logs them as warnings).
  std::function<void(const std::string&)> warn;
};

class WebhookSender {
 public:
  // `config`, `recorder` must outlive this; `database_path` is opened read-only.
  WebhookSender(const Config& config, std::string database_path, AlertRecorder* recorder,
                WebhookSenderOptions options = {});
  ~WebhookSender();  // Stop()s
  WebhookSender(const WebhookSender&) = delete;
  WebhookSender& operator=(const WebhookSender&) = delete;

  void Start();
  // Returns after the attempt in progress, if any (at most one webhook timeout).
  void Stop();

  // Delays after the 1st, 2nd ... failure: first_retry_ms x 2^(failures - 1), capped.
  UnixMs RetryDelay(int failures) const;

 private:
  void Run();
  // Tries `hook`'s waiting deliveries oldest first while they are due, stopping at the first
  // failure (order is kept). Returns when it is next due, or 0 when nothing waits.
  UnixMs DeliverDue(const Database& db, const WebhookConfig& hook, UnixMs now);

  const Config& config_;
  const std::string database_path_;
  AlertRecorder* const recorder_;
  WebhookSenderOptions options_;
  std::atomic<bool> stopping_{false};
  std::thread thread_;
};

// Hex HMAC-SHA256 of `timestamp + "." + body` under `secret`: the Ampledger-Signature value
// after "v1=". Exposed for tests and for the documentation's example.
std::string WebhookSignature(const std::string& secret, const std::string& timestamp,
                             const std::string& body);

}  // namespace ampledger
