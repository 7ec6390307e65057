// tests/api/webhook_sender_test.cpp
// Webhooks against a real httplib receiver on 127.0.0.1 that fails the first attempts: each
// event is delivered once with a 2xx, in order, signed; the outbox survives a sender restart.
#include "api/webhook_sender.h"

#include <doctest/doctest.h>
#include <httplib.h>
#include <openssl/evp.h>
#include <openssl/hmac.h>

#include <future>
#include <map>
#include <mutex>
#include <nlohmann/json.hpp>
#include <thread>

#include "storage/series.h"
#include "test_util.h"

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1'772'953'200'000;  // 2026-03-08T07:00:00Z
const std::string kSecret = "demo-only-webhook-secret";

// HMAC-SHA256 computed here with OpenSSL's one-shot HMAC (the reference), not the sender's.
std::string ReferenceSignature(const std::string& message) {
  unsigned char digest[32];
  unsigned length = 0;
  HMAC(EVP_sha256(), kSecret.data(), static_cast<int>(kSecret.size()),
       reinterpret_cast<const unsigned char*>(message.data()), message.size(), digest, &length);
  std::string hex;
  char byte[3];
  for (unsigned i = 0; i < length; ++i) {
    std::snprintf(byte, sizeof byte, "%02x", digest[i]);
    hex += byte;
  }
  return hex;
}

// A receiver that answers 503 until `fail_first` attempts were made, then 200.
class Receiver {
 public:
  explicit Receiver(int fail_first) : fail_first_(fail_first) {
    server_.Post("/in", [this](const httplib::Request& request, httplib::Response& response) {
      std::lock_guard<std::mutex> lock(mu_);
      ++attempts_;
      const std::string timestamp = request.get_header_value("Ampledger-Timestamp");
      if (request.get_header_value("Ampledger-Signature") !=
          "v1=" + ReferenceSignature(timestamp + "." + request.body)) {
        ++bad_signatures_;
      }
      if (attempts_ <= fail_first_) {
        response.status = 503;
        return;
      }
      const std::string id = request.get_header_value("Ampledger-Event-Id");
      ++delivered_[id];
      order_.push_back(id);
      bodies_[id] = request.body;
      response.status = 204;
    });
    port_ = server_.bind_to_any_port("127.0.0.1");
    thread_ = std::thread([this] { server_.listen_after_bind(); });
  }
  ~Receiver() {
    server_.stop();
    thread_.join();
  }
  int port() const { return port_; }
  std::string Url() const { return "http://127.0.0.1:" + std::to_string(port_) + "/in"; }
  void FailFirst(int attempts) {
    std::lock_guard<std::mutex> lock(mu_);
    fail_first_ = attempts;
  }

  int attempts() { std::lock_guard<std::mutex> l(mu_); return attempts_; }
  int bad_signatures() { std::lock_guard<std::mutex> l(mu_); return bad_signatures_; }
  std::map<std::string, int> delivered() { std::lock_guard<std::mutex> l(mu_); return delivered_; }
  std::vector<std::string> order() { std::lock_guard<std::mutex> l(mu_); return order_; }
  std::string body(const std::string& id) { std::lock_guard<std::mutex> l(mu_); return bodies_[id]; }

 private:
  httplib::Server server_;
  std::thread thread_;
  int port_ = 0;
  std::mutex mu_;
  int fail_first_;
  int attempts_ = 0;
  int bad_signatures_ = 0;
  std::map<std::string, int> delivered_;
  std::vector<std::string> order_;
  std::map<std::string, std::string> bodies_;
};

Config Site(const testing::TempDir& dir, const std::string& url) {
  const std::string toml = R"toml(
[site]
name = "Webhook test"
time_zone = "UTC"
nominal_volts = [230]
[[node]]
id = "panel"
auth = "plain"
[[node.channel]]
id = "ct1"
[[circuit]]
id = "dryer"
channels = ["panel/ct1"]
[[alert]]
id = "hot"
kind = "power_above"
circuits = ["dryer"]
level_watts = 1000
clear_watts = 500
[[webhook]]
id = "hub"
url = ")toml" + url + R"toml("
secret = ")toml" + kSecret + R"toml("
timeout_seconds = 2
[storage]
path = "hooks.db"
batch_millis = 5
)toml";
  Result<Config> config = ParseConfig(toml, dir.File("site.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  return *config;
}

// Waits up to 20 s for `done`.
bool Eventually(const std::function<bool()>& done) {
  for (int i = 0; i < 400; ++i) {
    if (done()) return true;
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  return done();
}

TEST_SUITE("api") {
  TEST_CASE("webhooks: retried with backoff until delivered, once per event id, signed") {
    testing::TempDir dir;
    Receiver receiver(3);
    Config config = Site(dir, receiver.Url());
    std::unique_ptr<Database> db = std::move(Database::Open(config.storage).value());
    SeriesMap series = RegisterSeries(*db, config).value();
    std::unique_ptr<AlertRecorder> recorder =
        std::move(AlertRecorder::Create(config, *db, AlertRecorderOptions{{"hub"}, {}}).value());
    WriterOptions writer_options;
    writer_options.hook = recorder.get();
    std::unique_ptr<ReadingWriter> writer =
        std::move(ReadingWriter::Start(config, db.get(), series, writer_options).value());
    recorder->Start(writer.get());
    auto store = [&](UnixMs end_ms, double watts) {
      ChannelReading r;
      r.channel = 0;
      r.end_ms = end_ms;
      r.duration_ms = 10'000;
      r.real_watts = watts;
      r.apparent_va = watts;
      std::promise<Status> done;
      writer->Submit(ReadingBatch{{r}, {}}, [&](const Status& s) { done.set_value(s); });
      REQUIRE(done.get_future().get().ok());
    };
    WebhookSenderOptions options;
    options.first_retry_ms = 50;
    options.max_retry_ms = 200;
    {
      WebhookSender sender(config, config.storage.path, recorder.get(), options);
      CHECK(sender.RetryDelay(1) == 50);
      CHECK(sender.RetryDelay(2) == 100);
      CHECK(sender.RetryDelay(3) == 200);
      CHECK(sender.RetryDelay(30) == 200);
      receiver.FailFirst(1000);  // down until further notice
      sender.Start();
      store(kT0, 1500);   // event 1: raised
      store(kT0 + 10'000, 100);  // event 2: cleared
      REQUIRE(Eventually([&] { return receiver.attempts() >= 3; }));
      sender.Stop();  // a restart with both events still in the outbox
    }
    CHECK(receiver.delivered().empty());
    CHECK(testing::QueryInt(config.storage.path,
                            "SELECT count(*) FROM webhook_outbox WHERE attempts > 0") >= 1);
    receiver.FailFirst(receiver.attempts() + 2);  // two more failures, then up
    {
      WebhookSender sender(config, config.storage.path, recorder.get(), options);
      sender.Start();
      REQUIRE(Eventually([&] { return receiver.delivered().size() == 2; }));
      REQUIRE(Eventually([&] {
        return testing::QueryInt(config.storage.path, "SELECT count(*) FROM webhook_outbox") == 0;
      }));
      sender.Stop();
    }
    CHECK(receiver.delivered() == std::map<std::string, int>{{"1", 1}, {"2", 1}});
    CHECK(receiver.order() == std::vector<std::string>{"1", "2"});
    CHECK(receiver.bad_signatures() == 0);
    nlohmann::json body = nlohmann::json::parse(receiver.body("1"));
    CHECK(body["id"] == 1);
    CHECK(body["kind"] == "raised");
    CHECK(body["subject"]["id"] == "dryer");
    CHECK(body["values"]["watts"] == 1500);
    recorder->Stop();
    writer->Stop();
  }

  TEST_CASE("webhooks: the signature is HMAC-SHA256 over timestamp, a dot and the body") {
    // The same message through the reference (OpenSSL one-shot HMAC) and the sender's helper.
    const std::string body = R"({"id":7,"kind":"cycle_finished"})";
    CHECK(WebhookSignature(kSecret, "1772953230", body) ==
          ReferenceSignature("1772953230." + body));
    CHECK(WebhookSignature(kSecret, "1772953230", body) !=
          WebhookSignature(kSecret, "1772953231", body));
  }
}

}  // namespace
}  // namespace ampledger
