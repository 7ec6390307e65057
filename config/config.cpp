// config/config.cpp
// Config's look-ups and the flat channel index, and the names of the config enums.
#include "config/config.h"

namespace ampledger {

namespace {

template <typename T>
const T* FindById(const std::vector<T>& items, const std::string& id) {
  for (const T& item : items) {
    if (item.id == id) return &item;
  }
  return nullptr;
}

int FindIn(const std::map<std::string, int, std::less<>>& index, std::string_view id) {
  auto it = index.find(id);
  return it == index.end() ? -1 : it->second;
}

}  // namespace

const NodeConfig* Config::FindNode(const std::string& id) const {
  return FindById(nodes, id);
}
const CircuitConfig* Config::FindCircuit(const std::string& id) const {
  return FindById(circuits, id);
}
const UnitConfig* Config::FindUnit(const std::string& id) const {
  return FindById(units, id);
}

const TariffFile* Config::FindTariff(const std::string& name) const {
  for (const TariffFile& file : tariffs) {
    if (file.name == name) return &file;
  }
  return nullptr;
}

int Config::FindNodeIndex(std::string_view id) const {
  return FindIn(node_index_, id);
}
int Config::FindCircuitIndex(std::string_view id) const {
  return FindIn(circuit_index_, id);
}

int Config::FindChannelIndex(const ChannelRef& ref) const {
  return FindChannelIndex(ref.node, ref.channel);
}

int Config::FindChannelIndex(std::string_view node, std::string_view channel) const {
  int node_index = FindNodeIndex(node);
  if (node_index < 0) return -1;
  // A node has a handful of channels: a linear scan beats hashing the pair.
  const std::vector<ChannelConfig>& channels = nodes[node_index].channels;
  for (size_t i = 0; i < channels.size(); ++i) {
    if (channels[i].id == channel) return node_first_channel_[node_index] + static_cast<int>(i);
  }
  return -1;
}

const ChannelConfig& Config::ChannelSettingsAt(int index) const {
  const FlatChannel& flat = flat_channels_[index];
  return nodes[flat.node].channels[flat.slot];
}

void Config::IndexChannels() {
  flat_channels_.clear();
  node_first_channel_.clear();
  circuit_channels_.assign(circuits.size(), {});
  node_index_.clear();
  circuit_index_.clear();
  for (size_t n = 0; n < nodes.size(); ++n) {
    node_index_.emplace(nodes[n].id, static_cast<int>(n));
    node_first_channel_.push_back(static_cast<int>(flat_channels_.size()));
    for (size_t c = 0; c < nodes[n].channels.size(); ++c) {
      flat_channels_.push_back(FlatChannel{ChannelRef{nodes[n].id, nodes[n].channels[c].id},
                                           static_cast<int>(n), static_cast<int>(c), -1});
    }
  }
  for (size_t k = 0; k < circuits.size(); ++k) {
    circuit_index_.emplace(circuits[k].id, static_cast<int>(k));
    for (const ChannelRef& ref : circuits[k].channels) {
      int index = FindChannelIndex(ref);
      if (index < 0) continue;
      circuit_channels_[k].push_back(index);
      if (flat_channels_[index].circuit < 0) flat_channels_[index].circuit = static_cast<int>(k);
    }
  }
}

const char* AuthModeName(AuthMode mode) {
  switch (mode) {
    case AuthMode::kCoseMac0: return "cose";
    case AuthMode::kPlain: return "plain";
  }
  return "?";
}

const char* DirectionName(Direction direction) {
  switch (direction) {
    case Direction::kConsumption: return "consumption";
    case Direction::kExport: return "export";
  }
  return "?";
}

const char* ShareRuleName(ShareRule rule) {
  switch (rule) {
    case ShareRule::kEqual: return "equal";
    case ShareRule::kFixed: return "fixed";
    case ShareRule::kProportional: return "proportional";
  }
  return "?";
}

const char* AlertKindName(AlertKind kind) {
  switch (kind) {
    case AlertKind::kPowerAbove: return "power_above";
    case AlertKind::kPowerBelow: return "power_below";
    case AlertKind::kBudget: return "budget";
    case AlertKind::kCycleDone: return "cycle_done";
    case AlertKind::kLeftOn: return "left_on";
    case AlertKind::kNodeSilent: return "node_silent";
    case AlertKind::kStandbyCreep: return "standby_creep";
  }
  return "?";
}

const char* SyncModeName(SyncMode mode) {
  switch (mode) {
    case SyncMode::kOff: return "off";
    case SyncMode::kNormal: return "normal";
    case SyncMode::kFull: return "full";
    case SyncMode::kExtra: return "extra";
  }
  return "?";
}

}  // namespace ampledger
