// tests/api/mqtt_test_broker.h
// For the MQTT tests: a real mosquitto broker started on 127.0.0.1 on a free port with a
// config file in a temporary folder, and a libmosquitto subscriber that records what it
// receives. Every wait is bounded. A missing broker binary fails the test that needs it
// (deploy/setup.sh test installs the mosquitto package), so the tests never pass silently.
#pragma once

#include <doctest/doctest.h>
#include <mosquitto.h>
#include <sys/socket.h>
#include <netinet/in.h>
#include <arpa/inet.h>
#include <signal.h>
#include <unistd.h>

#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <functional>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "process_util.h"
#include "test_util.h"

namespace ampledger::testing {

// The mosquitto executable: on PATH, else Debian's /usr/sbin/mosquitto; "" when absent.
inline std::string MosquittoPath() {
  std::vector<std::string> candidates;
  if (const char* path = std::getenv("PATH")) {
    std::string rest = path;
    for (std::size_t start = 0; start <= rest.size();) {
      std::size_t colon = rest.find(':', start);
      if (colon == std::string::npos) colon = rest.size();
      candidates.push_back(rest.substr(start, colon - start) + "/mosquitto");
      start = colon + 1;
    }
  }
  candidates.push_back("/usr/sbin/mosquitto");
  for (const std::string& candidate : candidates) {
    if (::access(candidate.c_str(), X_OK) == 0) return candidate;
  }
  return "";
}

// True once a TCP connection to 127.0.0.1:port succeeds, trying for up to `timeout`.
inline bool WaitListening(int port, std::chrono::milliseconds timeout) {
  const auto until = std::chrono::steady_clock::now() + timeout;
  while (std::chrono::steady_clock::now() < until) {
    int fd = ::socket(AF_INET, SOCK_STREAM, 0);
    sockaddr_in address{};
    address.sin_family = AF_INET;
    address.sin_port = htons(static_cast<std::uint16_t>(port));
    address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    const bool ok =
        ::connect(fd, reinterpret_cast<const sockaddr*>(&address), sizeof address) == 0;
    ::close(fd);
    if (ok) return true;
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  return false;
}

class MosquittoBroker {
 public:
  // Picks the port; Start() runs the broker on it (again after Stop(), same port).
  explicit MosquittoBroker(const TempDir& dir)
      : config_path_(dir.File("mosquitto.conf")), log_path_(dir.File("mosquitto.log")),
        port_(FreeLoopbackPort(SOCK_STREAM)) {
    // mosquitto 2.x listens on loopback only and refuses anonymous clients unless told.
    WriteFile(config_path_, "listener " + std::to_string(port_) +
                                " 127.0.0.1\nallow_anonymous true\npersistence false\n");
  }
  ~MosquittoBroker() { Stop(); }
  MosquittoBroker(const MosquittoBroker&) = delete;
  MosquittoBroker& operator=(const MosquittoBroker&) = delete;

  int port() const { return port_; }

  void Start() {
    const std::string binary = MosquittoPath();
    REQUIRE_MESSAGE(!binary.empty(),
                    "the mosquitto broker is not installed (apt-get install mosquitto; "
                    "deploy/setup.sh test does it)");
    REQUIRE(port_ > 0);
    pid_ = SpawnProcess({binary, "-c", config_path_}, log_path_);
    REQUIRE(pid_ > 0);
    const bool listening = WaitListening(port_, std::chrono::seconds(10));
    const std::string why = "mosquitto did not listen; its log: " + ReadFile(log_path_);
    REQUIRE_MESSAGE(listening, why);
  }

  void Stop() {
    if (pid_ <= 0) return;
    ::kill(pid_, SIGTERM);
    WaitExit(pid_, std::chrono::seconds(5));  // SIGKILLs it if still running
    pid_ = -1;
  }

 private:
  std::string config_path_;
  std::string log_path_;
  int port_;
  pid_t pid_ = -1;
};

struct ReceivedMessage {
  std::string topic;
  std::string payload;
  bool retain = false;
  int qos = 0;
};

// Subscribes to `filter` on the broker and keeps every message (libmosquitto's own thread).
class MqttProbe {
 public:
  MqttProbe(int port, const std::string& filter) : filter_(filter) {
    mosquitto_lib_init();
    client_ = mosquitto_new(nullptr, true, this);
    REQUIRE(client_ != nullptr);
    mosquitto_message_callback_set(client_, &MqttProbe::OnMessage);
    mosquitto_connect_callback_set(client_, &MqttProbe::OnConnect);
    mosquitto_subscribe_callback_set(client_, &MqttProbe::OnSubscribe);
    REQUIRE(mosquitto_connect(client_, "127.0.0.1", port, 30) == MOSQ_ERR_SUCCESS);
    REQUIRE(mosquitto_loop_start(client_) == MOSQ_ERR_SUCCESS);
    REQUIRE_MESSAGE(WaitFor([this] { return subscribed(); }), "the probe did not subscribe");
  }
  ~MqttProbe() {
    mosquitto_disconnect(client_);
    mosquitto_loop_stop(client_, false);
    mosquitto_destroy(client_);
  }
  MqttProbe(const MqttProbe&) = delete;
  MqttProbe& operator=(const MqttProbe&) = delete;

  std::vector<ReceivedMessage> messages() {
    std::lock_guard<std::mutex> lock(mu_);
    return messages_;
  }
  // The messages on `topic`, oldest first.
  std::vector<ReceivedMessage> On(const std::string& topic) {
    std::vector<ReceivedMessage> found;
    for (const ReceivedMessage& message : messages()) {
      if (message.topic == topic) found.push_back(message);
    }
    return found;
  }
  bool subscribed() {
    std::lock_guard<std::mutex> lock(mu_);
    return subscribed_;
  }

  // Polls `done` every 20 ms for up to `timeout`.
  static bool WaitFor(const std::function<bool()>& done,
                      std::chrono::milliseconds timeout = std::chrono::seconds(15)) {
    const auto until = std::chrono::steady_clock::now() + timeout;
    while (std::chrono::steady_clock::now() < until) {
      if (done()) return true;
      std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
    return done();
  }

 private:
  static void OnConnect(struct mosquitto* client, void* self, int rc) {
    auto* probe = static_cast<MqttProbe*>(self);
    if (rc != 0) return;
    {
      std::lock_guard<std::mutex> lock(probe->mu_);
      probe->subscribed_ = false;  // again after a reconnect, until the broker's SUBACK
    }
    mosquitto_subscribe(client, nullptr, probe->filter_.c_str(), 1);
  }
  static void OnSubscribe(struct mosquitto*, void* self, int, int, const int*) {
    auto* probe = static_cast<MqttProbe*>(self);
    std::lock_guard<std::mutex> lock(probe->mu_);
    probe->subscribed_ = true;
  }
  static void OnMessage(struct mosquitto*, void* self, const struct mosquitto_message* m) {
    auto* probe = static_cast<MqttProbe*>(self);
    std::lock_guard<std::mutex> lock(probe->mu_);
    probe->messages_.push_back(
        {m->topic, std::string(static_cast<const char*>(m->payload), m->payloadlen), m->retain,
         m->qos});
  }

  std::string filter_;
  struct mosquitto* client_ = nullptr;
  std::mutex mu_;
  bool subscribed_ = false;
  std::vector<ReceivedMessage> messages_;
};

}  // namespace ampledger::testing
