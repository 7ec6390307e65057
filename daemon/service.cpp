#include "daemon/service.h"

#include <spdlog/spdlog.h>

#include <condition_variable>
#include <mutex>
#include <thread>

#include "api/api_routes.h"
#include "api/http_server.h"
#include "api/mqtt_feeder.h"
#include "api/mqtt_publisher.h"
#include "api/web_routes.h"
#include "api/webhook_sender.h"
#include "daemon/ingest/ingest_stats.h"
#include "daemon/ingest/udp_receiver.h"
#include "daemon/ingest_loop.h"
#include "daemon/metering/tariff_schedule.h"
#include "daemon/sd_notify.h"
#include "storage/alert_recorder.h"
#include "storage/database.h"
#include "storage/reading_writer.h"
#include "storage/series.h"

namespace ampledger {

namespace {

std::vector<std::string> NodeIds(const Config& config) {
  std::vector<std::string> ids;
  for (const NodeConfig& node : config.nodes) ids.push_back(node.id);
  return ids;
}

}  // namespace

class ServiceImpl {
 public:
  explicit ServiceImpl(Config config)
      : config_(std::move(config)), stats_(NodeIds(config_)), http_(config_.http) {}

  ~ServiceImpl() {
    RequestStop();
    (void)Wait();
  }

  Status Start() {
    Status status = StartParts();
    if (!status.ok()) {
      StopParts();
      return status;
    }
    started_ = true;
    ingest_thread_ = std::thread([this] { ingest_->Run(stopping_); });
    (void)notifier_.Ready();
    spdlog::info("listening for nodes on udp {} (port {}), api on http {} (port {})",
                 config_.ingest.listen, receiver_->port(), config_.http.listen, http_.port());
    return Status::Ok();
  }

  void RequestStop() {
    std::lock_guard<std::mutex> lock(mu_);
    stopping_ = true;
    stop_requested_.notify_all();
  }

  Status Wait() {
    if (!started_) return Status::Ok();
    {
      std::unique_lock<std::mutex> lock(mu_);
      stop_requested_.wait(lock, [this] { return stopping_.load(); });
    }
    (void)notifier_.Stopping();
    StopParts();
    started_ = false;
    return Status::Ok();
  }

  std::uint16_t udp_port() const { return receiver_ ? receiver_->port() : 0; }
  std::uint16_t http_port() const { return http_.port(); }
  const TariffSchedule& tariffs() const { return tariffs_; }

 private:
  Status StartParts() {
    // Built once: the API's cost and statement routes price with it.
    Result<TariffSchedule> tariffs = TariffSchedule::Create(config_);
    if (!tariffs.ok()) return tariffs.status();
    tariffs_ = std::move(tariffs).value();
    Result<std::unique_ptr<Database>> db = Database::Open(config_.storage);
    if (!db.ok()) return db.status();
    db_ = std::move(db).value();
    Result<SeriesMap> series = RegisterSeries(*db_, config_);
    if (!series.ok()) return series.status();
    series_ = *series;
    Result<std::vector<NodeState>> node_states = LoadNodeStates(*db_);
    if (!node_states.ok()) return node_states.status();

    // Alert rules run inside the writer's transactions (storage/alert_recorder.h says why).
    AlertRecorderOptions alert_options;
    alert_options.tariffs = &tariffs_;  // cost budgets and cycle costs
    for (const WebhookConfig& webhook : config_.webhooks) {
      alert_options.webhooks.push_back(webhook.id);
    }
    Result<std::unique_ptr<AlertRecorder>> alerts =
        AlertRecorder::Create(config_, *db_, alert_options);
    if (!alerts.ok()) return alerts.status();
    alerts_ = std::move(alerts).value();
    WriterOptions writer_options;
    writer_options.hook = alerts_.get();
    Result<std::unique_ptr<ReadingWriter>> writer =
        ReadingWriter::Start(config_, db_.get(), *series, writer_options);
    if (!writer.ok()) return writer.status();
    writer_ = std::move(writer).value();
    alerts_->Start(writer_.get());

    Result<std::unique_ptr<UdpReceiver>> receiver = UdpReceiver::Open(config_.ingest);
    if (!receiver.ok()) return receiver.status();
    receiver_ = std::move(receiver).value();
    ingest_ = std::make_unique<IngestLoop>(config_, receiver_.get(), writer_.get(), &stats_,
                                           &notifier_);
    if (Status restored = ingest_->RestoreState(*node_states); !restored.ok()) return restored;

    ApiContext api{&config_, &series_, config_.storage.path, writer_.get(), &stats_,
                   receiver_.get()};
    if (config_.mqtt.enabled) {
      if (Status started = StartMqtt(); !started.ok()) return started;
      api.mqtt = &mqtt_->stats();
    }
    api.alerts = alerts_.get();
    api.tariffs = &tariffs_;
    AddApiRoutes(http_, api);
    AddWebRoutes(http_);
    WebhookSenderOptions sender_options;
    sender_options.warn = [](const std::string& line) { spdlog::warn("{}", line); };
    webhooks_ = std::make_unique<WebhookSender>(config_, config_.storage.path, alerts_.get(),
                                                sender_options);
    webhooks_->Start();
    return http_.Start();
  }

  // Live power and events to a broker ([mqtt]); they read committed rows only.
  Status StartMqtt() {
    MqttPublisherOptions options;
    options.time_zone = config_.site.time_zone;
    options.info = [](const std::string& line) { spdlog::info("{}", line); };
    options.warn = [](const std::string& line) { spdlog::warn("{}", line); };
    mqtt_ = std::make_unique<MqttPublisher>(config_.mqtt,
                                            static_cast<int>(config_.circuits.size()), options);
    if (Status started = mqtt_->Start(); !started.ok()) return started;
    MqttFeederOptions feeder_options;
    feeder_options.warn = options.warn;
    mqtt_feeder_ = std::make_unique<MqttFeeder>(config_, series_, config_.storage.path,
                                                &alerts_->feed(), mqtt_.get(), feeder_options);
    mqtt_feeder_->Start();
    return Status::Ok();
  }

  // Stops in dependency order: no new datagrams, then the writer flushes (its completions
  // still send acknowledgements through the open socket), then the socket and the API.
  void StopParts() {
    stopping_ = true;
    if (ingest_thread_.joinable()) ingest_thread_.join();
    if (webhooks_) webhooks_->Stop();
    if (mqtt_feeder_) mqtt_feeder_->Stop();  // before the feed it waits on closes
    if (mqtt_) mqtt_->Stop();
    if (alerts_) alerts_->Stop();  // no more timer ticks; long-polls return
    if (writer_) writer_->Stop();
    http_.Stop();
    ingest_.reset();
    receiver_.reset();
    writer_.reset();
    webhooks_.reset();
    mqtt_feeder_.reset();
    mqtt_.reset();
    alerts_.reset();
    db_.reset();
  }

  const Config config_;
  TariffSchedule tariffs_;  // set by Start(), then read-only
  IngestStats stats_;
  SdNotifier notifier_;
  HttpServer http_;
  std::unique_ptr<Database> db_;  // the writer's connection
  SeriesMap series_;
  std::unique_ptr<AlertRecorder> alerts_;  // the writer's hook: outlives it
  std::unique_ptr<ReadingWriter> writer_;
  std::unique_ptr<WebhookSender> webhooks_;
  std::unique_ptr<MqttPublisher> mqtt_;      // [mqtt] enabled only
  std::unique_ptr<MqttFeeder> mqtt_feeder_;  // reads the feed of alerts_, pushes to mqtt_
  std::unique_ptr<UdpReceiver> receiver_;
  std::unique_ptr<IngestLoop> ingest_;
  std::thread ingest_thread_;
  bool started_ = false;

  std::mutex mu_;
  std::condition_variable stop_requested_;
  std::atomic<bool> stopping_{false};
};

Service::Service(Config config) : impl_(std::make_unique<ServiceImpl>(std::move(config))) {}
Service::~Service() = default;
Status Service::Start() { return impl_->Start(); }
void Service::RequestStop() { impl_->RequestStop(); }
Status Service::Wait() { return impl_->Wait(); }
std::uint16_t Service::udp_port() const { return impl_->udp_port(); }
std::uint16_t Service::http_port() const { return impl_->http_port(); }
const TariffSchedule& Service::tariffs() const { return impl_->tariffs(); }

}  // namespace ampledger
