#include "api/mqtt_publisher.h"

#include <mosquitto.h>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <nlohmann/json.hpp>

#include "api/rfc3339.h"
#include "config/wall_clock.h"
#include "daemon/metering/local_time.h"

namespace ampledger {

namespace {

using Clock = std::chrono::steady_clock;

// How long one mosquitto_loop slice waits for the socket: also the longest a pushed message
// waits before it is handed to the client, and how soon Stop() is noticed.
constexpr int kLoopSliceMs = 100;

// mosquitto_lib_init is not thread-safe and must run once per process.
void InitLibraryOnce() {
  static std::once_flag once;
  std::call_once(once, [] { mosquitto_lib_init(); });
}

bool PowerOfTwo(int n) { return n > 0 && (n & (n - 1)) == 0; }

}  // namespace

MqttPublisher::MqttPublisher(const MqttConfig& config, int live_slots,
                             MqttPublisherOptions options)
    : config_(config),
      options_(std::move(options)),
      status_topic_(config.topic_prefix + "/status"),
      outbox_(live_slots, config.queue_events) {
  stats_.outbox = &outbox_;
}

MqttPublisher::~MqttPublisher() { Stop(); }

UnixMs MqttPublisher::RetryDelay(int failures) const {
  const double first_ms = config_.reconnect_first_seconds * 1000;
  const double max_ms = config_.reconnect_max_seconds * 1000;
  const double delay = first_ms * std::pow(2.0, std::clamp(failures, 1, 40) - 1);
  return static_cast<UnixMs>(std::min(delay, max_ms));
}

Status MqttPublisher::Start() {
  InitLibraryOnce();
  // A clean session: what matters to subscribers is retained on the broker, not in a session.
  client_ = mosquitto_new(config_.client_id.c_str(), true, this);
  if (client_ == nullptr) return Status::Unavailable("mqtt: cannot create a client");
  mosquitto_connect_callback_set(client_, &MqttPublisher::OnConnect);
  mosquitto_disconnect_callback_set(client_, &MqttPublisher::OnDisconnect);
  mosquitto_publish_callback_set(client_, &MqttPublisher::OnPublish);
  mosquitto_max_inflight_messages_set(client_, kMaxEventsInFlight);
  if (!config_.username.empty()) {
    mosquitto_username_pw_set(client_, config_.username.c_str(),
                              config_.password.empty() ? nullptr : config_.password.c_str());
  }
  const std::string will = StatusPayload(false, "connection lost");
  if (int rc = mosquitto_will_set(client_, status_topic_.c_str(), static_cast<int>(will.size()),
                                  will.data(), 1, true);
      rc != MOSQ_ERR_SUCCESS) {
    mosquitto_destroy(client_);
    client_ = nullptr;
    return Status::InvalidArgument(std::string("mqtt: cannot set the will: ") +
                                   mosquitto_strerror(rc));
  }
  next_attempt_ = Clock::now();
  thread_ = std::thread([this] { Run(); });
  return Status::Ok();
}

void MqttPublisher::Stop() {
  {
    std::lock_guard<std::mutex> lock(mu_);
    stopping_ = true;
  }
  wake_.notify_all();
  if (thread_.joinable()) thread_.join();
  if (client_ != nullptr) {
    mosquitto_destroy(client_);
    client_ = nullptr;
  }
}

std::string MqttPublisher::StatusPayload(bool online, const char* reason) const {
  nlohmann::json body = {{"state", online ? "online" : "offline"}};
  if (reason != nullptr) body["reason"] = reason;
  if (online || std::string(reason) != "connection lost") {  // the will is written in advance
    const UnixMs now = options_.clock ? options_.clock() : WallClockMs();
    Result<LocalTime> zone =
        LocalTime::ForZone(options_.time_zone.empty() ? "UTC" : options_.time_zone);
    body["since"] = zone.ok() ? FormatLocalRfc3339(*zone, now) : std::to_string(now);
    body["since_ms"] = now;
  }
  return body.dump();
}

void MqttPublisher::SleepUntil(Clock::time_point until) {
  std::unique_lock<std::mutex> lock(mu_);
  wake_.wait_until(lock, until, [this] { return stopping_; });
}

void MqttPublisher::Run() {
  while (true) {
    {
      std::lock_guard<std::mutex> lock(mu_);
      if (stopping_) break;
    }
    const Clock::time_point now = Clock::now();
    if (!stats_.connected && !attempting_) {
      if (now < next_attempt_) {
        SleepUntil(std::min(next_attempt_, now + std::chrono::milliseconds(kLoopSliceMs * 5)));
        continue;
      }
      Connect();
      continue;
    }
    if (attempting_ && now - attempt_at_ > std::chrono::seconds(config_.keepalive_seconds)) {
      Failed("no answer from the broker within keepalive_seconds");
      continue;
    }
    const int rc = mosquitto_loop(client_, kLoopSliceMs, 1);
    if (rc != MOSQ_ERR_SUCCESS) {
      // Unless a callback (refused, disconnected) already dealt with it.
      if (stats_.connected || attempting_) {
        Failed(rc == MOSQ_ERR_ERRNO ? std::string(std::strerror(errno)) : mosquitto_strerror(rc));
      }
      continue;
    }
    if (stats_.connected) Drain();
  }
  if (stats_.connected) {
    // Said by us, since a clean disconnect makes the broker discard the will.
    const std::string offline = StatusPayload(false, "stopped");
    mosquitto_publish(client_, nullptr, status_topic_.c_str(), static_cast<int>(offline.size()),
                      offline.data(), 1, true);
    mosquitto_disconnect(client_);
    // Until the broker saw the DISCONNECT (the socket closes), at most about 2 s.
    for (int i = 0; i < 20 && mosquitto_loop(client_, kLoopSliceMs, 1) == MOSQ_ERR_SUCCESS;
         ++i) {
      if (mosquitto_socket(client_) < 0) break;
    }
    stats_.connected = false;
  }
}

void MqttPublisher::Connect() {
  attempting_ = true;
  attempt_at_ = Clock::now();
  // The first attempt sets host and port; later ones reuse them and close any old socket.
  const int rc = connect_called_ ? mosquitto_reconnect_async(client_)
                                 : mosquitto_connect_async(client_, config_.host.c_str(),
                                                           config_.port, config_.keepalive_seconds);
  connect_called_ = true;
  if (rc != MOSQ_ERR_SUCCESS) {
    Failed(rc == MOSQ_ERR_ERRNO ? std::string(std::strerror(errno)) : mosquitto_strerror(rc));
  }
}

void MqttPublisher::Failed(const std::string& why) {
  if (stats_.connected) {
    ++stats_.disconnects;
    if (options_.warn) {
      options_.warn("mqtt: lost the connection to " + config_.host + ":" +
                    std::to_string(config_.port) + ": " + why);
    }
  } else {
    ++stats_.connect_failures;
    ++failures_;
    if (options_.warn && PowerOfTwo(failures_)) {
      options_.warn("mqtt: cannot connect to " + config_.host + ":" +
                    std::to_string(config_.port) + ": " + why + " (" +
                    std::to_string(failures_) + " failures in a row; next try in " +
                    std::to_string(RetryDelay(failures_)) + " ms)");
    }
  }
  stats_.connected = false;
  attempting_ = false;
  // Whatever libmosquitto does with unacknowledged messages of a lost connection, they no
  // longer hold back the outbox.
  in_flight_.clear();
  next_attempt_ = Clock::now() + std::chrono::milliseconds(RetryDelay(std::max(failures_, 1)));
}

void MqttPublisher::Drain() {
  for (const MqttMessage& message : outbox_.TakeLive()) {
    if (!Publish(message)) return;  // the connection failed; Run() notices
  }
  while (static_cast<int>(in_flight_.size()) < kMaxEventsInFlight) {
    std::optional<MqttMessage> event = outbox_.TakeEvent();
    if (!event) return;
    if (!Publish(*event)) {
      outbox_.ReturnEvent(std::move(*event));
      return;
    }
  }
}

bool MqttPublisher::Publish(const MqttMessage& message) {
  int mid = 0;
  const int rc =
      mosquitto_publish(client_, &mid, message.topic.c_str(),
                        static_cast<int>(message.payload.size()), message.payload.data(),
                        message.qos, message.retain);
  if (rc != MOSQ_ERR_SUCCESS) return false;
  if (message.qos > 0) in_flight_.insert(mid);
  return true;
}

void MqttPublisher::OnConnect(struct mosquitto*, void* self, int rc) {
  auto* publisher = static_cast<MqttPublisher*>(self);
  publisher->attempting_ = false;
  if (rc != 0) {  // refused: CONNACK's return code (MQTT 3.1.1 section 3.2.2.3)
    publisher->Failed(std::string("refused: ") + mosquitto_connack_string(rc));
    return;
  }
  const bool again = publisher->stats_.connects > 0;
  ++publisher->stats_.connects;
  publisher->stats_.connected = true;
  publisher->failures_ = 0;
  const std::string online = publisher->StatusPayload(true, nullptr);
  mosquitto_publish(publisher->client_, nullptr, publisher->status_topic_.c_str(),
                    static_cast<int>(online.size()), online.data(), 1, true);
  if (publisher->options_.info) {
    publisher->options_.info(std::string("mqtt: ") + (again ? "reconnected" : "connected") +
                             " to " + publisher->config_.host + ":" +
                             std::to_string(publisher->config_.port) + ", topics under " +
                             publisher->config_.topic_prefix + "/");
  }
}

void MqttPublisher::OnDisconnect(struct mosquitto*, void* self, int rc) {
  auto* publisher = static_cast<MqttPublisher*>(self);
  if (rc != 0 && publisher->stats_.connected) {  // unexpected; rc 0 is our own disconnect
    publisher->Failed("disconnected (" + std::string(mosquitto_strerror(rc)) + ")");
  }
}

void MqttPublisher::OnPublish(struct mosquitto*, void* self, int mid) {
  auto* publisher = static_cast<MqttPublisher*>(self);
  ++publisher->stats_.published;
  publisher->in_flight_.erase(mid);
}

}  // namespace ampledger
