// storage/series.h
// Maps the config's names to the database's stable integer series ids: a channel by
// (node id, channel id), a circuit by its id. Ids survive restarts and config reorders;
// a name seen once keeps its id forever. A SeriesMap is immutable once built and may be
// read from any thread.
#pragma once

#include <cstdint>
#include <unordered_map>
#include <vector>

#include "config/config.h"
#include "storage/database.h"

namespace ampledger {

struct SeriesMap {
  // By flat channel index (ChannelReading::channel, Config order: node by node, channel by
  // channel).
  std::vector<std::int64_t> channel_ids;
  std::vector<int> circuit_of_channel;  // index into Config::circuits; -1 = feeds none
  // By circuit index (Config::circuits order).
  std::vector<std::int64_t> circuit_ids;
  std::vector<std::vector<int>> channels_of_circuit;  // flat channel indexes

  int ChannelCount() const { return static_cast<int>(channel_ids.size()); }
  int CircuitCount() const { return static_cast<int>(circuit_ids.size()); }
  // The flat index of a stored channel id; -1 when the channel is no longer configured.
  int ChannelIndexOfId(std::int64_t id) const;

  std::unordered_map<std::int64_t, int> channel_index_of_id;
};

// Gives every channel and circuit of `config` its id, adding the missing names in one
// transaction. Call on the writer's connection at start-up, before the writer runs.
Result<SeriesMap> RegisterSeries(Database& db, const Config& config);

// The same map, read without writing (for a reader connection, Database::OpenReader): a name
// never registered gets id -1, which matches no stored row.
Result<SeriesMap> LookUpSeries(const Database& db, const Config& config);

}  // namespace ampledger
