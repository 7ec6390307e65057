#include "daemon/demo_simulator.h"

#include <spdlog/spdlog.h>

#include <cmath>

#include "config/wall_clock.h"
#include "daemon/demo_loads.h"
#include "daemon/metering/local_time.h"

namespace ampledger {

namespace {

constexpr double kLegVolts = 120.0;  // the demo site's split-phase leg voltage
constexpr UnixMs kBackfillIntervalMs = 60 * kMsPerSecond;

// What a node of each kind measures: the panels' nodes differ on purpose, so the demo shows
// measured, derived and estimated values side by side.
enum class NodeKind {
  kFull,         // current, leg voltage, real power and a real-energy register
  kCurrentOnly,  // current alone: power is derived and estimated by the daemon
  kWithVoltage,  // current, leg voltage and real power
};

NodeKind KindOf(const NodeConfig& node) {
  if (node.id == "lower-panel") return NodeKind::kCurrentOnly;
  if (node.auth == AuthMode::kPlain) return NodeKind::kWithVoltage;
  return NodeKind::kFull;
}

}  // namespace

struct DemoSimulator::SimulatedNode {
  const NodeConfig* config = nullptr;
  NodeKind kind = NodeKind::kFull;
  NodeClientOptions options;
  std::unique_ptr<NodeClient> client;
  std::uint32_t boot = 1;
  std::uint32_t seq = 0;
  std::vector<double> register_j;  // per channel, since boot
  std::uint64_t losses = 0;        // for the repeatable loss pattern
};

DemoSimulator::DemoSimulator(const Config& config, std::string daemon_udp,
                             DemoSimulatorOptions options)
    : config_(config), daemon_udp_(std::move(daemon_udp)), options_(options) {}

DemoSimulator::~DemoSimulator() { Stop(); }

Status DemoSimulator::Start() {
  for (const NodeConfig& node : config_.nodes) {
    auto simulated = std::make_unique<SimulatedNode>();
    simulated->config = &node;
    simulated->kind = KindOf(node);
    simulated->register_j.assign(node.channels.size(), 0.0);
    NodeClientOptions options;
    options.node = node.id;
    options.key.assign(node.key.begin(), node.key.end());
    options.encoding.format =
        node.auth == AuthMode::kPlain ? PackFormat::kCbor : PackFormat::kCoseMac0;
    options.resend_after_ms = 2000;
    options.max_unacked = 768;  // below the daemon's replay window of 1024
    Result<std::unique_ptr<NodeClient>> client = NodeClient::Open(daemon_udp_, options);
    if (!client.ok()) return client.status().WithContext("demo node " + node.id);
    simulated->client = std::move(client).value();
    simulated->options = options;
    nodes_.push_back(std::move(simulated));
  }
  thread_ = std::thread([this] { Run(); });
  return Status::Ok();
}

void DemoSimulator::Stop() {
  stopping_ = true;
  if (thread_.joinable()) thread_.join();
}

void DemoSimulator::Run() {
  Backfill();
  if (!stopping_) Live();
}

namespace {

// The pack a simulated node sends for the interval ending at `end_ms`.
NodePack MakePack(const Config& config, const LocalTime& local, NodeKind kind,
                  const NodeConfig& node, std::uint32_t boot, std::uint32_t seq, UnixMs end_ms,
                  std::int32_t interval_ms, std::vector<double>& register_j) {
  NodePack pack{node.id, boot, seq, interval_ms, {}};
  for (size_t c = 0; c < node.channels.size(); ++c) {
    int channel_index = config.FindChannelIndex(node.id, node.channels[c].id);
    int circuit_index = config.CircuitOfChannel(channel_index);
    ChannelSample sample;
    sample.channel = node.channels[c].id;
    sample.end_ms = end_ms;
    sample.duration_ms = interval_ms;
    double amps = 0, leg_watts = 0;
    if (circuit_index >= 0) {
      const CircuitConfig& circuit = config.circuits[circuit_index];
      DemoLoad load = DemoCircuitLoad(circuit.id, end_ms - interval_ms / 2, local);
      double circuit_volts = circuit.nominal_volts > 0 ? circuit.nominal_volts : kLegVolts;
      amps = load.watts / (circuit_volts * load.power_factor);
      leg_watts = kLegVolts * amps * load.power_factor;  // what this leg's CT sees
    }
    // A little measurement noise, and the CT's calibration error the config's gain corrects.
    double gain_error = 1.0 / node.channels[c].gain;
    sample.amps = amps * gain_error;
    register_j[c] += leg_watts * gain_error * interval_ms / 1000.0;
    if (kind != NodeKind::kCurrentOnly) sample.real_watts = leg_watts * gain_error;
    if (kind == NodeKind::kFull) sample.real_register_j = register_j[c];
    // A node that measures real power measures its leg's voltage too, and says so.
    if (kind != NodeKind::kCurrentOnly) sample.volts = kLegVolts + 1.5 * std::sin(end_ms / 7e5);
    pack.samples.push_back(sample);
  }
  return pack;
}

}  // namespace

void DemoSimulator::Backfill() {
  Result<LocalTime> local = LocalTime::ForZone(config_.site.time_zone);
  if (!local.ok()) return;
  const UnixMs now = WallClockMs();
  const UnixMs start = (now - options_.history_days * 86400 * kMsPerSecond) /
                       kBackfillIntervalMs * kBackfillIntervalMs;
  spdlog::info("demo: sending {} days of history from {} simulated nodes", options_.history_days,
               nodes_.size());
  for (UnixMs end = start + kBackfillIntervalMs; end <= now && !stopping_;
       end += kBackfillIntervalMs) {
    for (auto& node : nodes_) {
      NodePack pack = MakePack(config_, *local, node->kind, *node->config, node->boot,
                               ++node->seq, end, kBackfillIntervalMs, node->register_j);
      while (!node->client->Send(pack).ok() && !stopping_) {
        node->client->PollAcks(50);
        node->client->ResendDue(64);
      }
      node->client->PollAcks(0);
    }
  }
  for (int round = 0; round < 600 && !stopping_; ++round) {
    size_t waiting = 0;
    for (auto& node : nodes_) {
      node->client->PollAcks(10);
      node->client->ResendDue(256);
      waiting += node->client->unacked();
    }
    if (waiting == 0) break;
  }
  spdlog::info("demo: history sent; simulated nodes now report every {} s",
               options_.live_interval.count() / 1000.0);
}

// The roof node's outage: its datagrams go nowhere, and it keeps them for later.
bool DemoSimulator::Offline(const SimulatedNode& node,
                            std::chrono::steady_clock::duration elapsed) const {
  return node.config->auth == AuthMode::kPlain && elapsed >= options_.outage_after &&
         elapsed < options_.outage_after + options_.outage_length;
}

// A node restarts: boot counter up, sequence and registers from zero, and the packs it kept
// in RAM are gone.
void DemoSimulator::Reboot(SimulatedNode& node) {
  ++node.boot;
  node.seq = 0;
  std::fill(node.register_j.begin(), node.register_j.end(), 0.0);
  Result<std::unique_ptr<NodeClient>> client = NodeClient::Open(daemon_udp_, node.options);
  if (client.ok()) node.client = std::move(client).value();
  spdlog::info("demo: node {} reboots (boot {})", node.config->id, node.boot);
}

void DemoSimulator::Live() {
  Result<LocalTime> local = LocalTime::ForZone(config_.site.time_zone);
  if (!local.ok()) return;
  using Clock = std::chrono::steady_clock;
  const Clock::time_point live_start = Clock::now();
  Clock::time_point next_report = live_start;
  bool rebooted = false;
  const std::int32_t interval_ms = static_cast<std::int32_t>(options_.live_interval.count());
  while (!stopping_) {
    const Clock::time_point now = Clock::now();
    if (now >= next_report) {
      next_report += options_.live_interval;
      const UnixMs end = WallClockMs();
      const auto elapsed = now - live_start;
      for (auto& node : nodes_) {
        if (!rebooted && node->config->id == "lower-panel" && elapsed >= options_.reboot_after) {
          rebooted = true;
          Reboot(*node);
        }
        // Every 1/loss_fraction-th datagram is lost on its first send (resent later).
        bool lost = Offline(*node, elapsed) ||
                    std::fmod(++node->losses * options_.loss_fraction, 1.0) <
                        options_.loss_fraction;
        NodePack pack = MakePack(config_, *local, node->kind, *node->config, node->boot,
                                 ++node->seq, end, interval_ms, node->register_j);
        (void)node->client->Send(pack, lost);
      }
    }
    for (auto& node : nodes_) {
      node->client->PollAcks(0);
      if (!Offline(*node, Clock::now() - live_start)) node->client->ResendDue(64);
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
  }
}

}  // namespace ampledger
