// api/webhook_sender.cpp
#include "api/webhook_sender.h"

#include <httplib.h>
#include <openssl/evp.h>
#include <openssl/hmac.h>

#include <algorithm>
#include <cmath>

#include "api/event_json.h"
#include "config/wall_clock.h"
#include "storage/alert_queries.h"

namespace ampledger {

namespace {

// Deliveries read per webhook per round; the rest wait for the next round.
constexpr int kDeliveriesPerRound = 50;
// When nothing is due and no event arrives, look again after this long anyway, in case a
// clock step moved a due time (one cheap query a minute; not the event path).
constexpr UnixMs kIdleRecheckMs = 60'000;

std::string Hex(const unsigned char* bytes, unsigned length) {
  static const char kDigits[] = "0123456789abcdef";
  std::string hex;
  for (unsigned i = 0; i < length; ++i) {
    hex += kDigits[bytes[i] >> 4];
    hex += kDigits[bytes[i] & 15];
  }
  return hex;
}

// One POST; "" when a 2xx came back, else what went wrong.
std::string Post(const WebhookConfig& hook, const std::string& body, std::int64_t event,
                 UnixMs now) {
  Result<WebhookUrl> url = ParseWebhookUrl(hook.url);  // checked at load; cannot fail here
  if (!url.ok()) return url.status().message();
  const std::string origin = (url->https ? "https://" : "http://") + url->host + ":" +
                             std::to_string(url->port);
  httplib::Client client(origin);
  const auto timeout = std::chrono::milliseconds(std::llround(hook.timeout_seconds * 1000));
  client.set_connection_timeout(timeout);
  client.set_read_timeout(timeout);
  client.set_write_timeout(timeout);
  const std::string timestamp = std::to_string(now / 1000);
  httplib::Headers headers = {
      {"Ampledger-Event-Id", std::to_string(event)},
      {"Ampledger-Timestamp", timestamp},
      {"Ampledger-Signature", "v1=" + WebhookSignature(hook.secret, timestamp, body)},
  };
  try {
    httplib::Result result = client.Post(url->path, headers, body, "application/json");
    if (!result) return "no answer: " + httplib::to_string(result.error());
    if (result->status < 200 || result->status > 299) {
      return "answered HTTP " + std::to_string(result->status);
    }
    return "";
  } catch (const std::exception& error) {
    return std::string("request failed: ") + error.what();
  }
}

}  // namespace

std::string WebhookSignature(const std::string& secret, const std::string& timestamp,
                             const std::string& body) {
  const std::string message = timestamp + "." + body;
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned length = 0;
  HMAC(EVP_sha256(), secret.data(), static_cast<int>(secret.size()),
       reinterpret_cast<const unsigned char*>(message.data()), message.size(), digest, &length);
  return Hex(digest, length);
}

WebhookSender::WebhookSender(const Config& config, std::string database_path,
                             AlertRecorder* recorder, WebhookSenderOptions options)
    : config_(config),
      database_path_(std::move(database_path)),
      recorder_(recorder),
      options_(std::move(options)) {
  if (!options_.clock) options_.clock = [] { return UnixMs{WallClockMs()}; };
  if (!options_.warn) options_.warn = [](const std::string&) {};
}

WebhookSender::~WebhookSender() { Stop(); }

void WebhookSender::Start() {
  if (config_.webhooks.empty()) return;
  thread_ = std::thread([this] { Run(); });
}

void WebhookSender::Stop() {
  stopping_ = true;
  recorder_->feed().Nudge();
  if (thread_.joinable()) thread_.join();
}

UnixMs WebhookSender::RetryDelay(int failures) const {
  UnixMs delay = options_.first_retry_ms;
  for (int i = 1; i < failures && delay < options_.max_retry_ms; ++i) delay *= 2;
  return std::min(delay, options_.max_retry_ms);
}

UnixMs WebhookSender::DeliverDue(const Database& db, const WebhookConfig& hook, UnixMs now) {
  Result<std::vector<OutboxEntry>> due = ReadWaitingDeliveries(db, hook.id, kDeliveriesPerRound);
  if (!due.ok()) {
    options_.warn("webhook " + hook.id + ": reading the outbox: " + due.status().ToString());
    return now + options_.first_retry_ms;
  }
  Result<LocalTime> zone = LocalTime::ForZone(config_.site.time_zone);
  const std::optional<LocalTime> site_zone =
      zone.ok() ? std::optional<LocalTime>(*zone) : std::nullopt;
  for (const OutboxEntry& entry : *due) {
    if (stopping_) return 0;
    if (entry.next_ms > now) break;  // the oldest is not due yet; the newer ones wait for it
    Result<StoredEvent> event = ReadEvent(db, entry.event);
    if (!event.ok()) {
      options_.warn("webhook " + hook.id + ": event " + std::to_string(entry.event) + ": " +
                    event.status().ToString());
      return now + options_.first_retry_ms;
    }
    const std::string body = EventJson(config_, site_zone, *event).dump();
    const UnixMs sent_at = options_.clock();
    const std::string error = Post(hook, body, entry.event, sent_at);
    const bool delivered = error.empty();
    const UnixMs next_ms = delivered ? 0 : sent_at + RetryDelay(entry.attempts + 1);
    if (!delivered) {
      options_.warn("webhook " + hook.id + ": event " + std::to_string(entry.event) +
                    " attempt " + std::to_string(entry.attempts + 1) + ": " + error +
                    "; next try in " + std::to_string((next_ms - sent_at) / 1000) + " s");
    }
    Status recorded = recorder_->RecordDelivery(hook.id, entry.event, delivered, next_ms, error);
    if (!recorded.ok()) {
      options_.warn("webhook " + hook.id + ": recording delivery of event " +
                    std::to_string(entry.event) + ": " + recorded.ToString());
      return now + options_.first_retry_ms;
    }
    if (!delivered) break;  // keep the order: nothing newer goes before this one
  }
  Result<UnixMs> next = NextDeliveryTime(db, hook.id);
  return next.ok() ? *next : now + options_.first_retry_ms;
}

void WebhookSender::Run() {
  Result<std::unique_ptr<Database>> db = Database::OpenReader(database_path_);
  if (!db.ok()) {
    options_.warn("webhooks stopped: " + db.status().ToString());
    return;
  }
  EventFeed& feed = recorder_->feed();
  while (!stopping_) {
    const std::int64_t seen = feed.newest();
    const UnixMs now = options_.clock();
    UnixMs wake = now + kIdleRecheckMs;
    for (const WebhookConfig& hook : config_.webhooks) {
      const UnixMs next = DeliverDue(**db, hook, now);
      if (next > 0) wake = std::min(wake, next);
    }
    if (stopping_) break;
    const UnixMs sleep_ms = std::max<UnixMs>(0, wake - options_.clock());
    if (sleep_ms == 0 && wake <= now) continue;  // due already (a failed round's retry time)
    (void)feed.WaitAfter(seen, EventFeed::Clock::now() + std::chrono::milliseconds(sleep_ms), 0);
  }
}

}  // namespace ampledger
