#include "daemon/ingest/ingest_stats.h"

namespace ampledger {

IngestStats::IngestStats(const std::vector<std::string>& node_ids) {
  for (const std::string& id : node_ids) nodes_[id].node = id;
}

void IngestStats::CountRefusal(RefusalReason reason, const std::string& node) {
  refused[static_cast<int>(reason)].fetch_add(1, std::memory_order_relaxed);
  if (node.empty()) return;
  std::lock_guard<std::mutex> lock(mu_);
  auto found = nodes_.find(node);
  if (found == nodes_.end()) return;
  ++found->second.refused[static_cast<int>(reason)];
}

void IngestStats::NodeAccepted(const std::string& node, UnixMs now, std::int32_t interval_ms,
                               std::uint32_t boot, std::uint32_t seq) {
  std::lock_guard<std::mutex> lock(mu_);
  auto found = nodes_.find(node);
  if (found == nodes_.end()) return;
  NodeHealth& health = found->second;
  health.last_seen_ms = now;
  health.interval_ms = interval_ms;
  health.boot = boot;
  health.seq = seq;
  ++health.accepted;
}

std::vector<NodeHealth> IngestStats::Nodes() const {
  std::lock_guard<std::mutex> lock(mu_);
  std::vector<NodeHealth> copy;
  copy.reserve(nodes_.size());
  for (const auto& [id, health] : nodes_) copy.push_back(health);
  return copy;
}

}  // namespace ampledger
