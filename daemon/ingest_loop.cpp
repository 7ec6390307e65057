#include "daemon/ingest_loop.h"

#include <pthread.h>
#include <spdlog/spdlog.h>

#include <algorithm>
#include <chrono>

#include "config/wall_clock.h"
#include "daemon/ingest/ack.h"
#include "daemon/metering/derive.h"

namespace ampledger {

namespace {

// The circuit a spare channel (wired to no circuit) is derived for: the site's nominal
// voltage, consumption, unity power factor. Its readings are stored raw, never rolled up.
CircuitConfig SpareCircuit(const SiteConfig& site) {
  CircuitConfig spare;
  spare.id = "(spare)";
  spare.nominal_volts = site.nominal_volts.empty() ? 0 : site.nominal_volts.front();
  return spare;
}

// The volts the node measured on `channel` for the interval ending at `end_ms`, if any.
std::optional<double> VoltsInPack(const NodePack& pack, const std::string& channel,
                                  UnixMs end_ms) {
  for (const ChannelSample& sample : pack.samples) {
    if (sample.channel == channel && sample.end_ms == end_ms) return sample.volts;
  }
  return std::nullopt;
}

}  // namespace

IngestLoop::IngestLoop(const Config& config, UdpReceiver* receiver, ReadingWriter* writer,
                       IngestStats* stats, SdNotifier* notifier)
    : config_(config), receiver_(receiver), writer_(writer), stats_(stats), notifier_(notifier) {
  for (const NodeConfig& node : config.nodes) {
    NodeEntry& entry = nodes_[node.id];
    entry.config = &node;
    entry.key.assign(node.key.begin(), node.key.end());
  }
}

Status IngestLoop::RestoreState(const std::vector<NodeState>& states) {
  std::lock_guard<std::mutex> lock(mu_);
  for (const NodeState& state : states) {
    auto found = nodes_.find(state.node);
    if (found == nodes_.end()) continue;
    Result<ReplayWindow> window = ReplayWindow::Deserialize(state.blob);
    if (!window.ok()) return window.status().WithContext("node \"" + state.node + "\" state");
    found->second.committed = *window;
    found->second.pending = *window;
  }
  return Status::Ok();
}

void IngestLoop::Run(const std::atomic<bool>& stopping) {
  pthread_setname_np(pthread_self(), "ampl-ingest");  // shown by top -H and perf
  using Clock = std::chrono::steady_clock;
  auto interval = notifier_->watchdog_interval();
  Clock::time_point next_ping = Clock::now();
  auto handle = [this](const ReceivedDatagram& datagram) { Handle(datagram, WallClockMs()); };
  while (!stopping.load()) {
    // Under load, one submission takes what has arrived meanwhile (up to a bound, so a
    // flood cannot hold back what is accepted): fewer, larger submissions mean one commit
    // callback, one node-state blob and one sendmmsg of acknowledgements per many datagrams.
    // When datagrams stop arriving it is submitted at once, so a lone datagram never waits.
    Result<int> received = receiver_->Receive(100, handle);
    int handled = received.ok() ? *received : 0;
    while (received.ok() && *received > 0 && handled < kMaxDatagramsPerSubmission) {
      received = receiver_->Receive(0, handle);
      if (received.ok()) handled += *received;
    }
    if (!received.ok()) {
      refusal_log_.Warn("receiving datagrams: " + received.status().ToString());
    }
    Submit();
    stats_->kernel_drops.store(receiver_->kernel_drops(), std::memory_order_relaxed);
    if (interval && Clock::now() >= next_ping) {
      (void)notifier_->Watchdog();
      next_ping = Clock::now() + *interval;
    }
  }
}

void IngestLoop::Handle(const ReceivedDatagram& datagram, UnixMs now) {
  stats_->received.fetch_add(1, std::memory_order_relaxed);
  if (datagram.oversize) {
    Refuse(Refusal{RefusalReason::kOversize, "longer than " +
                                                 std::to_string(config_.ingest.max_datagram_bytes) +
                                                 " bytes"},
           "", datagram.from);
    return;
  }
  std::string_view bytes(reinterpret_cast<const char*>(datagram.bytes.data()),
                         datagram.bytes.size());
  DecodeResult<DecodedDatagram> decoded = DecodeDatagram(bytes, now, config_.nodes, config_.ingest);
  if (!decoded.ok()) {
    Refuse(decoded.refusal(), "", datagram.from);
    return;
  }
  const NodePack& pack = decoded->pack;
  NodeEntry& node = nodes_.at(pack.node);  // DecodeDatagram accepts configured nodes only

  ReplayVerdict verdict;
  {
    std::lock_guard<std::mutex> lock(mu_);
    verdict = node.committed.Check(pack.boot, pack.seq);
  }
  if (verdict == ReplayVerdict::kTooOld || verdict == ReplayVerdict::kOldBoot) {
    Refuse(Refusal{RefusalReason::kReplay, std::string("boot ") + std::to_string(pack.boot) +
                                               " seq " + std::to_string(pack.seq) + ": " +
                                               ReplayVerdictName(verdict)},
           pack.node, datagram.from);
    return;
  }
  if (verdict == ReplayVerdict::kDuplicate) {
    // Stored before; only our acknowledgement was lost. Acknowledge again, store nothing.
    stats_->duplicates.fetch_add(1, std::memory_order_relaxed);
    SendAck(node, *decoded, datagram.from);
    return;
  }

  DecodeResult<std::vector<ChannelReading>> readings = Derive(pack);
  if (!readings.ok()) {
    Refuse(readings.refusal(), pack.node, datagram.from);
    return;
  }

  {
    std::lock_guard<std::mutex> lock(mu_);
    if (node.pending.Check(pack.boot, pack.seq) != ReplayVerdict::kFresh) {
      // The same datagram is already on its way to disk; its acknowledgement will follow.
      stats_->duplicates.fetch_add(1, std::memory_order_relaxed);
      return;
    }
    node.pending.Update(pack.boot, pack.seq);
  }
  std::vector<ChannelReading>& batch_readings = open_.batch.readings;
  batch_readings.insert(batch_readings.end(), readings->begin(), readings->end());
  open_.accepted.push_back(Accepted{&node, pack.boot, pack.seq, pack.interval_ms,
                                    decoded->encoding, datagram.from, now,
                                    readings->size()});
  if (std::find(open_.nodes.begin(), open_.nodes.end(), &node) == open_.nodes.end()) {
    open_.nodes.push_back(&node);
  }
}

void IngestLoop::Submit() {
  if (open_.accepted.empty()) return;
  Submission submission = std::move(open_);
  open_ = Submission();
  {
    // Each node's window as it stands now covers exactly what is submitted so far; the
    // writer commits in submission order, so it is stored with the last of it.
    std::lock_guard<std::mutex> lock(mu_);
    for (const NodeEntry* node : submission.nodes) {
      submission.batch.node_states.push_back(
          NodeState{node->config->id, node->pending.Serialize()});
    }
  }
  writer_->Submit(std::move(submission.batch),
                  [this, accepted = std::move(submission.accepted)](const Status& status) {
                    Completed(accepted, status);
                  });
}

void IngestLoop::Completed(const std::vector<Accepted>& accepted, const Status& status) {
  if (!status.ok()) {
    stats_->write_failures.fetch_add(accepted.size(), std::memory_order_relaxed);
    storing_failed_.store(true, std::memory_order_relaxed);
    storage_log_.Warn("not acknowledged: " + std::to_string(accepted.size()) +
                      " datagrams could not be stored (the nodes will resend): " +
                      status.ToString());
    std::lock_guard<std::mutex> lock(mu_);
    // Forget what is in flight; resends are idempotent.
    for (const Accepted& datagram : accepted) datagram.node->pending = datagram.node->committed;
    return;
  }
  if (storing_failed_.exchange(false, std::memory_order_relaxed)) {
    spdlog::warn("storing readings again; acknowledgements resumed");
  }
  {
    std::lock_guard<std::mutex> lock(mu_);
    for (const Accepted& datagram : accepted) {
      datagram.node->committed.Update(datagram.boot, datagram.seq);
    }
  }
  std::vector<OutgoingDatagram> acks;
  acks.reserve(accepted.size());
  std::size_t readings = 0;
  for (const Accepted& datagram : accepted) {
    const std::string& node = datagram.node->config->id;
    readings += datagram.readings;
    stats_->NodeAccepted(node, datagram.received_ms, datagram.interval_ms, datagram.boot,
                         datagram.seq);
    acks.push_back(OutgoingDatagram{
        EncodeAck(Ack{node, datagram.boot, datagram.seq}, datagram.encoding, datagram.node->key),
        datagram.from});
  }
  stats_->stored.fetch_add(accepted.size(), std::memory_order_relaxed);
  stats_->readings_stored.fetch_add(readings, std::memory_order_relaxed);
  const std::size_t sent = receiver_->SendAll(acks);
  stats_->acks_sent.fetch_add(sent, std::memory_order_relaxed);
  if (sent < acks.size()) {
    stats_->ack_failures.fetch_add(acks.size() - sent, std::memory_order_relaxed);
    refusal_log_.Warn(std::to_string(acks.size() - sent) + " of " +
                      std::to_string(acks.size()) +
                      " acknowledgements not sent (socket buffer full); the nodes will resend");
  }
}

DecodeResult<std::vector<ChannelReading>> IngestLoop::Derive(const NodePack& pack) const {
  const CircuitConfig spare = SpareCircuit(config_.site);
  std::vector<ChannelReading> readings;
  readings.reserve(pack.samples.size());
  for (const ChannelSample& sample : pack.samples) {
    int channel = config_.FindChannelIndex(pack.node, sample.channel);
    int circuit_index = config_.CircuitOfChannel(channel);
    const CircuitConfig& circuit = circuit_index < 0 ? spare : config_.circuits[circuit_index];
    VoltageReference voltage;
    voltage.nominal_volts = circuit_index < 0 ? spare.nominal_volts
                                              : ResolveNominalVolts(circuit, config_.site);
    if (circuit.voltage_from && circuit.voltage_from->node == pack.node) {
      voltage.measured_volts = VoltsInPack(pack, circuit.voltage_from->channel, sample.end_ms);
    }
    Result<ChannelReading> reading =
        DeriveReading(sample, channel, pack.boot, config_.ChannelSettingsAt(channel), circuit,
                      voltage);
    if (!reading.ok()) return Refusal{RefusalReason::kOutOfRange, reading.status().message()};
    readings.push_back(*reading);
  }
  return readings;
}

void IngestLoop::Refuse(const Refusal& refusal, const std::string& node, const PeerAddress& from) {
  stats_->CountRefusal(refusal.reason, node);
  refusal_log_.Warn("refused datagram from " + from.ToString() + ": " +
                    RefusalName(refusal.reason) + ": " + refusal.detail);
}

void IngestLoop::SendAck(const NodeEntry& node, const DecodedDatagram& decoded,
                         const PeerAddress& to) {
  std::string ack = EncodeAck(Ack{decoded.pack.node, decoded.pack.boot, decoded.pack.seq},
                              decoded.encoding, node.key);
  Status sent = receiver_->SendTo(
      {reinterpret_cast<const std::uint8_t*>(ack.data()), ack.size()}, to);
  if (sent.ok()) {
    stats_->acks_sent.fetch_add(1, std::memory_order_relaxed);
  } else {
    stats_->ack_failures.fetch_add(1, std::memory_order_relaxed);
    refusal_log_.Warn("acknowledgement to " + to.ToString() + ": " + sent.ToString());
  }
}

}  // namespace ampledger
