// api/mqtt_outbox.h
// MqttOutbox holds what waits to go to the MQTT broker, in bounded memory whatever the broker
// does: one slot per circuit for live power (a newer value replaces a waiting one, which is
// counted as superseded: only the newest matters to a subscriber of a retained topic) and a
// FIFO of events of at most `max_events` (when full, the oldest waiting event is dropped and
// counted, so a broker away for long costs old events, never memory or a blocked producer).
// Every method takes one mutex for a move or two; any thread may call any method.
#pragma once

#include <atomic>
#include <cstdint>
#include <deque>
#include <mutex>
#include <optional>
#include <string>
#include <vector>

namespace ampledger {

struct MqttMessage {
  std::string topic;
  std::string payload;
  int qos = 0;
  bool retain = false;
};

class MqttOutbox {
 public:
  // `live_slots` >= 0 circuits; `max_events` >= 1.
  MqttOutbox(int live_slots, int max_events);
  MqttOutbox(const MqttOutbox&) = delete;
  MqttOutbox& operator=(const MqttOutbox&) = delete;

  // Replaces slot `slot`'s waiting value (0 <= slot < live_slots; others are ignored).
  void PushLive(int slot, MqttMessage message);
  // Appends an event, dropping the oldest waiting one when max_events wait.
  void PushEvent(MqttMessage message);
  // Puts an event taken by TakeEvent() back in front (its publish failed); dropped and
  // counted when the queue filled up meanwhile.
  void ReturnEvent(MqttMessage message);

  // The waiting live values, oldest slot first; the slots are empty afterwards.
  std::vector<MqttMessage> TakeLive();
  // The oldest waiting event, if any.
  std::optional<MqttMessage> TakeEvent();

  std::size_t events_waiting() const;
  std::size_t live_waiting() const;
  int max_events() const { return max_events_; }
  std::uint64_t events_dropped() const { return events_dropped_.load(); }
  std::uint64_t live_superseded() const { return live_superseded_.load(); }

 private:
  const int max_events_;
  mutable std::mutex mu_;
  std::vector<std::optional<MqttMessage>> live_;  // GUARDED_BY(mu_): by slot
  std::size_t live_count_ = 0;                    // GUARDED_BY(mu_): filled slots
  std::deque<MqttMessage> events_;                // GUARDED_BY(mu_)
  std::atomic<std::uint64_t> events_dropped_{0};
  std::atomic<std::uint64_t> live_superseded_{0};
};

}  // namespace ampledger
