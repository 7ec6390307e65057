#include "api/mqtt_feeder.h"

#include <cmath>

#include "api/api_limits.h"
#include "api/mqtt_messages.h"
#include "config/wall_clock.h"
#include "storage/alert_queries.h"
#include "storage/queries.h"

namespace ampledger {

namespace {

using Clock = std::chrono::steady_clock;

// The longest one wait lasts, so Stop() is noticed even if its nudge came just before the
// wait began.
constexpr auto kWaitSlice = std::chrono::milliseconds(500);
constexpr int kEventsPerRead = 100;

}  // namespace

MqttFeeder::MqttFeeder(const Config& config, const SeriesMap& series, std::string database_path,
                       EventFeed* feed, MqttPublisher* publisher, MqttFeederOptions options)
    : config_(config),
      series_(series),
      database_path_(std::move(database_path)),
      feed_(feed),
      publisher_(publisher),
      options_(std::move(options)),
      last_(config.circuits.size()) {
  Result<LocalTime> zone = LocalTime::ForZone(config.site.time_zone);
  if (!zone.ok()) zone = LocalTime::ForZone("UTC");
  if (zone.ok()) zone_ = *zone;
}

MqttFeeder::~MqttFeeder() { Stop(); }

void MqttFeeder::Start() {
  cursor_ = feed_ != nullptr ? feed_->newest() : 0;
  thread_ = std::thread([this] { Run(); });
}

void MqttFeeder::Stop() {
  {
    std::lock_guard<std::mutex> lock(mu_);
    stopping_ = true;
  }
  wake_.notify_all();
  if (feed_ != nullptr) feed_->Nudge();
  if (thread_.joinable()) thread_.join();
}

UnixMs MqttFeeder::Now() const { return options_.clock ? options_.clock() : WallClockMs(); }

void MqttFeeder::Run() {
  const auto interval = std::chrono::milliseconds(
      static_cast<std::int64_t>(std::llround(config_.mqtt.live_interval_seconds * 1000)));
  Clock::time_point next_live = Clock::now();
  std::unique_ptr<Database> db;
  while (true) {
    {
      std::lock_guard<std::mutex> lock(mu_);
      if (stopping_) return;
    }
    if (db == nullptr) {
      Result<std::unique_ptr<Database>> opened = Database::OpenReader(database_path_);
      if (opened.ok()) {
        db = std::move(opened).value();
      } else if (options_.warn) {
        options_.warn("mqtt: cannot read the database: " + opened.status().message());
      }
    }
    Status status;
    if (db != nullptr && feed_ != nullptr && feed_->newest() > cursor_) {
      status = PushNewEvents(*db);
    }
    if (status.ok() && db != nullptr && Clock::now() >= next_live) {
      status = PushLive(*db, Now());
      next_live += interval;
      if (next_live < Clock::now()) next_live = Clock::now() + interval;  // fell behind
    }
    if (!status.ok()) {
      if (options_.warn) options_.warn("mqtt: " + status.message());
      db.reset();  // reopened on the next round
    }
    const Clock::time_point until = std::min(next_live, Clock::now() + kWaitSlice);
    if (feed_ != nullptr) {
      // Unavailable once the recorder closed its feed (shutdown): then sleep below instead.
      if (feed_->WaitAfter(cursor_, until, 0).ok()) continue;
    }
    std::unique_lock<std::mutex> lock(mu_);
    wake_.wait_until(lock, until, [this] { return stopping_; });
  }
}

Status MqttFeeder::PushNewEvents(const Database& db) {
  if (!zone_) return Status::Unavailable("cannot read the time zone database");
  while (true) {
    Result<std::vector<StoredEvent>> events = ReadEventsAfter(db, cursor_, kEventsPerRead);
    if (!events.ok()) return events.status();
    for (const StoredEvent& event : *events) {
      publisher_->PushEvent(EventMessage(config_, *zone_, event, config_.mqtt.event_qos));
      cursor_ = event.id;
    }
    if (static_cast<int>(events->size()) < kEventsPerRead) return Status::Ok();
  }
}

Status MqttFeeder::PushLive(const Database& db, UnixMs now) {
  if (!zone_) return Status::Unavailable("cannot read the time zone database");
  Result<std::vector<ChannelReading>> latest =
      ReadLatestReadings(db, series_, now - kLiveHorizonMs);
  if (!latest.ok()) return latest.status();
  const MqttConfig& mqtt = config_.mqtt;
  for (const CircuitLive& live : SumCircuitLive(config_, *latest)) {
    LastPushed& last = last_[live.circuit];
    if (live.reading_end_ms <= last.reading_end_ms) continue;  // nothing new
    const bool moved = std::fabs(live.watts - last.watts) >= mqtt.live_change_watts;
    const bool stale = now - last.pushed_ms >= mqtt.live_refresh_seconds * 1000;
    if (last.pushed_ms != 0 && !moved && !stale) continue;
    publisher_->PushLive(live.circuit, LiveMessage(config_, *zone_, live));
    last = {live.reading_end_ms, live.watts, now};
  }
  return Status::Ok();
}

}  // namespace ampledger
