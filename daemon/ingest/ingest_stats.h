// daemon/ingest/ingest_stats.h
// What ingest has seen, for /health, /metrics and the nodes route: datagrams by outcome,
// refusals by reason, and per node the last pack accepted. Written by the ingest and writer
// threads, read by API threads: counters are relaxed atomics, node health is under a mutex.
#pragma once

#include <array>
#include <atomic>
#include <cstdint>
#include <map>
#include <mutex>
#include <string>
#include <vector>

#include "daemon/ingest/refusal.h"
#include "daemon/metering/reading.h"

namespace ampledger {

struct NodeHealth {
  std::string node;
  UnixMs last_seen_ms = 0;      // reception time of the last datagram accepted; 0 = never
  std::int32_t interval_ms = 0; // the reporting interval the node announced
  std::uint32_t boot = 0;
  std::uint32_t seq = 0;
  std::uint64_t accepted = 0;   // datagrams stored (or re-acknowledged duplicates)
  std::array<std::uint64_t, kRefusalReasonCount> refused{};  // after the node was identified
};

class IngestStats {
 public:
  // One health entry per configured node, so hostile ids cannot grow the table.
  explicit IngestStats(const std::vector<std::string>& node_ids);

  std::atomic<std::uint64_t> received{0};       // datagrams read from the socket
  std::atomic<std::uint64_t> stored{0};         // datagrams whose readings were committed
  std::atomic<std::uint64_t> readings_stored{0};
  std::atomic<std::uint64_t> duplicates{0};     // already stored: acknowledged again, not stored
  std::atomic<std::uint64_t> write_failures{0}; // the writer refused or failed: no ack sent
  std::atomic<std::uint64_t> acks_sent{0};
  std::atomic<std::uint64_t> ack_failures{0};
  std::atomic<std::uint64_t> kernel_drops{0};   // from SO_RXQ_OVFL
  std::array<std::atomic<std::uint64_t>, kRefusalReasonCount> refused{};

  // `node` is "" when the datagram named no configured node.
  void CountRefusal(RefusalReason reason, const std::string& node);
  void NodeAccepted(const std::string& node, UnixMs now, std::int32_t interval_ms,
                    std::uint32_t boot, std::uint32_t seq);

  // A copy of every node's health, ordered by node id.
  std::vector<NodeHealth> Nodes() const;

 private:
  mutable std::mutex mu_;
  std::map<std::string, NodeHealth> nodes_;  // GUARDED_BY(mu_)
};

}  // namespace ampledger
