// api/mqtt_feeder.h
// MqttFeeder turns what the daemon committed into MQTT messages and pushes them to the
// MqttPublisher (which never blocks it):
//   - events: it sleeps on the alert recorder's EventFeed and, when events are committed,
//     reads them from the database (read-only connection) and pushes each one; it starts
//     after the newest event at Start(), so a restart does not replay history (the whole
//     history is in /v1/events);
//   - live power: every [mqtt] live_interval_seconds it reads each channel's newest reading,
//     as /v1/live does, and pushes each circuit whose reading is newer than the one it last
//     pushed, unless live_change_watts asks for a larger move (live_refresh_seconds bounds
//     how long a steady value goes unrepeated).
// It reads committed rows only, so ingest and the writer never wait for it or for the broker.
//
// One thread. Start(), Stop() from the owner.
#pragma once

#include <condition_variable>
#include <functional>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <vector>

#include "api/mqtt_publisher.h"
#include "config/config.h"
#include "daemon/metering/local_time.h"
#include "storage/event_feed.h"
#include "storage/series.h"

namespace ampledger {

struct MqttFeederOptions {
  std::function<UnixMs()> clock;                 // wall clock; tests substitute
  std::function<void(const std::string&)> warn;  // database errors (the service: spdlog)
};

class MqttFeeder {
 public:
  // Everything must outlive this; `feed` may be nullptr (no alert rules: live values only).
  MqttFeeder(const Config& config, const SeriesMap& series, std::string database_path,
             EventFeed* feed, MqttPublisher* publisher, MqttFeederOptions options = {});
  ~MqttFeeder();  // Stop()s
  MqttFeeder(const MqttFeeder&) = delete;
  MqttFeeder& operator=(const MqttFeeder&) = delete;

  void Start();
  void Stop();  // returns within about half a second

 private:
  struct LastPushed {
    UnixMs reading_end_ms = 0;
    double watts = 0;
    UnixMs pushed_ms = 0;
  };

  void Run();
  UnixMs Now() const;
  Status PushNewEvents(const Database& db);
  Status PushLive(const Database& db, UnixMs now);

  const Config& config_;
  const SeriesMap& series_;
  const std::string database_path_;
  EventFeed* const feed_;
  MqttPublisher* const publisher_;
  const MqttFeederOptions options_;
  std::optional<LocalTime> zone_;  // the site's; UTC when it cannot be read

  // The thread's own.
  std::int64_t cursor_ = 0;            // newest event pushed
  std::vector<LastPushed> last_;       // by circuit index

  std::mutex mu_;
  std::condition_variable wake_;
  bool stopping_ = false;  // GUARDED_BY(mu_)
  std::thread thread_;
};

}  // namespace ampledger
