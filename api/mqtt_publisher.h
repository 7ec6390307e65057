// api/mqtt_publisher.h
// MqttPublisher keeps one connection to an MQTT broker (libmosquitto, MQTT 3.1.1) and sends
// what producers push: live power (retained, QoS 0) and events (not retained, [mqtt]
// event_qos). Producers only push into an MqttOutbox (api/mqtt_outbox.h): bounded memory, no
// blocking, whatever the broker does. Topics and payloads: api/MQTT.md.
//
// One thread owns the libmosquitto client: it connects (connect_async), runs mosquitto_loop
// in slices of 100 ms, and between slices hands waiting messages to the client while it is
// connected, at most kMaxEventsInFlight unacknowledged QoS 1/2 events at a time (so the
// library's own queue stays small). A refused or lost connection is retried after
// reconnect_first_seconds, doubling up to reconnect_max_seconds; failures are logged on
// the 1st, 2nd, 4th, 8th ... in a row, so a broker away for a day writes a few lines.
// `<prefix>/status` is retained: "online" on each connection, "offline" as the broker's will
// (the broker publishes it when we vanish) and on Stop().
//
// Threads: Start(), Stop() from the owner; PushLive(), PushEvent(), stats() from any thread.
#pragma once

#include <atomic>
#include <condition_variable>
#include <cstdint>
#include <functional>
#include <mutex>
#include <string>
#include <thread>
#include <unordered_set>

#include "api/mqtt_outbox.h"
#include "config/config.h"
#include "daemon/metering/reading.h"

struct mosquitto;

namespace ampledger {

// Counters for /metrics; any thread reads them.
struct MqttStats {
  std::atomic<bool> connected{false};
  std::atomic<std::uint64_t> published{0};        // sent (QoS 0) or acknowledged (QoS 1, 2)
  std::atomic<std::uint64_t> connects{0};         // connections the broker accepted
  std::atomic<std::uint64_t> connect_failures{0}; // attempts refused, failed or timed out
  std::atomic<std::uint64_t> disconnects{0};      // accepted connections lost later
  const MqttOutbox* outbox = nullptr;             // dropped and waiting counts
};

struct MqttPublisherOptions {
  std::function<UnixMs()> clock;  // wall clock for status times; tests substitute
  // The zone of RFC 3339 times in the status payload; "" = UTC.
  std::string time_zone;
  std::function<void(const std::string&)> info;  // connections made (the service: spdlog)
  std::function<void(const std::string&)> warn;  // failures, rate-limited as above
};

class MqttPublisher {
 public:
  // Unacknowledged QoS 1/2 events handed to libmosquitto at most: beyond it events wait in
  // the outbox, where the bound applies.
  static constexpr int kMaxEventsInFlight = 20;

  // `config` must outlive this. `live_slots`: circuits (slots of MqttOutbox::PushLive).
  MqttPublisher(const MqttConfig& config, int live_slots, MqttPublisherOptions options = {});
  ~MqttPublisher();  // Stop()s
  MqttPublisher(const MqttPublisher&) = delete;
  MqttPublisher& operator=(const MqttPublisher&) = delete;

  // Starts the thread; it connects in the background (a broker that is away is not an error
  // here: it is retried). Fails only if libmosquitto cannot make a client.
  Status Start();
  // Publishes "offline" (status) if connected, disconnects and joins; returns within about
  // 2 s. Messages still waiting are lost (events stay in the database: /v1/events).
  void Stop();

  // Never block beyond a short mutex; see MqttOutbox for what the bound does.
  void PushLive(int slot, MqttMessage message) { outbox_.PushLive(slot, std::move(message)); }
  void PushEvent(MqttMessage message) { outbox_.PushEvent(std::move(message)); }

  const MqttStats& stats() const { return stats_; }
  const MqttOutbox& outbox() const { return outbox_; }

  // The wait before attempt n + 1 after n >= 1 failures in a row, in ms:
  // reconnect_first x 2^(n - 1), at most reconnect_max.
  UnixMs RetryDelay(int failures) const;

 private:
  void Run();
  void Connect();                        // starts an attempt, or records its failure
  void Failed(const std::string& why);   // an attempt or a connection ended: back off
  void Drain();                          // hands waiting messages to the client
  bool Publish(const MqttMessage& message);
  std::string StatusPayload(bool online, const char* reason) const;
  void SleepUntil(std::chrono::steady_clock::time_point until);

  static void OnConnect(struct mosquitto* client, void* self, int rc);
  static void OnDisconnect(struct mosquitto* client, void* self, int rc);
  static void OnPublish(struct mosquitto* client, void* self, int mid);

  const MqttConfig& config_;
  const MqttPublisherOptions options_;
  const std::string status_topic_;
  MqttOutbox outbox_;
  MqttStats stats_;

  // The thread's own.
  struct mosquitto* client_ = nullptr;
  bool connect_called_ = false;                       // host and port given to the client
  bool attempting_ = false;                           // connect started, no answer yet
  std::chrono::steady_clock::time_point attempt_at_;  // when it started
  std::chrono::steady_clock::time_point next_attempt_;
  int failures_ = 0;                                  // in a row
  std::unordered_set<int> in_flight_;                 // mids of QoS 1/2 events not yet acked

  std::mutex mu_;
  std::condition_variable wake_;
  bool stopping_ = false;  // GUARDED_BY(mu_)
  std::thread thread_;
};

}  // namespace ampledger
