#include "api/mqtt_outbox.h"

#include <utility>

namespace ampledger {

MqttOutbox::MqttOutbox(int live_slots, int max_events)
    : max_events_(max_events < 1 ? 1 : max_events), live_(live_slots < 0 ? 0 : live_slots) {}

void MqttOutbox::PushLive(int slot, MqttMessage message) {
  std::lock_guard<std::mutex> lock(mu_);
  if (slot < 0 || slot >= static_cast<int>(live_.size())) return;
  std::optional<MqttMessage>& waiting = live_[slot];
  if (waiting) {
    ++live_superseded_;
  } else {
    ++live_count_;
  }
  waiting = std::move(message);
}

void MqttOutbox::PushEvent(MqttMessage message) {
  std::lock_guard<std::mutex> lock(mu_);
  if (static_cast<int>(events_.size()) >= max_events_) {
    events_.pop_front();
    ++events_dropped_;
  }
  events_.push_back(std::move(message));
}

void MqttOutbox::ReturnEvent(MqttMessage message) {
  std::lock_guard<std::mutex> lock(mu_);
  if (static_cast<int>(events_.size()) >= max_events_) {
    ++events_dropped_;  // it is the oldest: the one the bound gives up
    return;
  }
  events_.push_front(std::move(message));
}

std::vector<MqttMessage> MqttOutbox::TakeLive() {
  std::vector<MqttMessage> taken;
  std::lock_guard<std::mutex> lock(mu_);
  if (live_count_ == 0) return taken;
  taken.reserve(live_count_);
  for (std::optional<MqttMessage>& slot : live_) {
    if (!slot) continue;
    taken.push_back(std::move(*slot));
    slot.reset();
  }
  live_count_ = 0;
  return taken;
}

std::optional<MqttMessage> MqttOutbox::TakeEvent() {
  std::lock_guard<std::mutex> lock(mu_);
  if (events_.empty()) return std::nullopt;
  MqttMessage message = std::move(events_.front());
  events_.pop_front();
  return message;
}

std::size_t MqttOutbox::events_waiting() const {
  std::lock_guard<std::mutex> lock(mu_);
  return events_.size();
}

std::size_t MqttOutbox::live_waiting() const {
  std::lock_guard<std::mutex> lock(mu_);
  return live_count_;
}

}  // namespace ampledger
