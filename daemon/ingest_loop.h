// daemon/ingest_loop.h
// The UDP receive thread's work:
//   receive -> decode and verify (daemon/ingest) -> anti-replay check -> derive readings
//   (daemon/metering) -> ReadingWriter::Submit -> once durable: advance the window, ack.
// The datagrams waiting in the socket (up to kMaxDatagramsPerSubmission) go to the writer as
// one submission with one completion, and their acknowledgements leave in one sendmmsg: under
// load the cost per datagram is decoding and storing, not queueing and system calls.
// A datagram is acknowledged only after its readings are committed; a valid duplicate of a
// committed datagram is acknowledged again without storing anything; a duplicate of one still
// in flight is dropped (its own acknowledgement is on the way). Every refusal is counted by
// reason and logged at a limited rate.
//
// Threads: Run() on the ingest thread. The writer's completions run on the writer thread and
// touch only the replay state (under mu_), the stats (atomics) and UdpReceiver::SendTo().
#pragma once

#include <atomic>
#include <cstdint>
#include <map>
#include <memory>
#include <mutex>
#include <string>
#include <vector>

#include "config/config.h"
#include "daemon/ingest/datagram.h"
#include "daemon/ingest/ingest_stats.h"
#include "daemon/ingest/pack_encoder.h"
#include "daemon/ingest/replay_window.h"
#include "daemon/ingest/udp_receiver.h"
#include "daemon/logging.h"
#include "daemon/sd_notify.h"
#include "storage/reading_writer.h"

namespace ampledger {

class IngestLoop {
 public:
  // All pointers must outlive this.
  IngestLoop(const Config& config, UdpReceiver* receiver, ReadingWriter* writer,
             IngestStats* stats, SdNotifier* notifier);
  IngestLoop(const IngestLoop&) = delete;
  IngestLoop& operator=(const IngestLoop&) = delete;

  // Restores each node's anti-replay window as last committed. Unknown nodes are ignored
  // (removed from the config); a corrupt blob is an error naming the node.
  Status RestoreState(const std::vector<NodeState>& states);

  // Receives and handles datagrams until `stopping` is set (checked every 100 ms). Pings the
  // systemd watchdog from here, so a stuck ingest thread is noticed.
  void Run(const std::atomic<bool>& stopping);

  // Handles one datagram received at `now`: refuses it, acknowledges a duplicate, or adds it
  // to the open submission. Submit() hands that to the writer; Run() calls both.
  void Handle(const ReceivedDatagram& datagram, UnixMs now);
  void Submit();

 private:
  struct NodeEntry {
    const NodeConfig* config = nullptr;
    std::string key;         // the HMAC key as bytes
    ReplayWindow committed;  // GUARDED_BY(mu_): datagrams durably stored
    ReplayWindow pending;    // GUARDED_BY(mu_): committed plus those submitted, not yet durable
  };

  // A datagram in a submission, acknowledged once the submission is durable.
  struct Accepted {
    NodeEntry* node = nullptr;
    std::uint32_t boot = 0;
    std::uint32_t seq = 0;
    std::int32_t interval_ms = 0;
    PackEncoding encoding;
    PeerAddress from;
    UnixMs received_ms = 0;
    std::size_t readings = 0;
  };
  // Datagrams accepted since the last Submit(); the ingest thread's own.
  struct Submission {
    ReadingBatch batch;
    std::vector<Accepted> accepted;
    std::vector<NodeEntry*> nodes;  // each node with a datagram in it, once
  };

  // Run() submits after this many datagrams at most (accepted or not).
  static constexpr int kMaxDatagramsPerSubmission = 256;

  // On the writer thread: the submission's datagrams are durable (or failed).
  void Completed(const std::vector<Accepted>& accepted, const Status& status);
  // The readings of `pack`, derived for their circuits; a Refusal if a value is unusable.
  DecodeResult<std::vector<ChannelReading>> Derive(const NodePack& pack) const;
  void Refuse(const Refusal& refusal, const std::string& node, const PeerAddress& from);
  void SendAck(const NodeEntry& node, const DecodedDatagram& decoded, const PeerAddress& to);

  const Config& config_;
  UdpReceiver* const receiver_;
  ReadingWriter* const writer_;
  IngestStats* const stats_;
  SdNotifier* const notifier_;
  RateLimitedLog refusal_log_{30};
  RateLimitedLog storage_log_{6};            // its own budget: a flood must not hide it
  std::atomic<bool> storing_failed_{false};  // since the last stored submission

  Submission open_;

  std::mutex mu_;
  std::map<std::string, NodeEntry> nodes_;  // by node id; the map itself is fixed after start
};

}  // namespace ampledger
