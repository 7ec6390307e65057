// storage/series.cpp
#include "storage/series.h"

namespace ampledger {
namespace {

// The flat channel order of Config, computed from its vectors so storage depends on nothing
// but the plain structs.
std::vector<ChannelRef> FlatChannels(const Config& config) {
  std::vector<ChannelRef> out;
  for (const NodeConfig& node : config.nodes) {
    for (const ChannelConfig& channel : node.channels) out.push_back({node.id, channel.id});
  }
  return out;
}

// The id of a name, inserting it first when `insert` is given; -1 when absent and not inserted.
Result<std::int64_t> IdOf(Statement* insert, Statement& select, const std::string& a,
                          const std::string* b, const std::string& what) {
  if (insert != nullptr) {
    insert->Bind(1, a);
    if (b != nullptr) insert->Bind(2, *b);
    if (Status s = insert->Run(what); !s.ok()) return s;
  }
  select.Bind(1, a);
  if (b != nullptr) select.Bind(2, *b);
  Result<bool> row = select.Step(what);
  if (!row.ok()) return row.status();
  std::int64_t id = row.value() ? select.Int(0) : -1;
  select.Reset();
  if (id < 0 && insert != nullptr) {
    return Status::Corruption("series id for \"" + a + "\" vanished");
  }
  return id;
}

Result<SeriesMap> RegisterAll(const Database& db, const Config& config, bool add_missing) {
  Result<Statement> insert_channel =
      db.Prepare(add_missing ? "INSERT OR IGNORE INTO channel_series (node, channel) VALUES (?1, ?2)"
                             : "SELECT 1");
  Result<Statement> select_channel =
      db.Prepare("SELECT id FROM channel_series WHERE node = ?1 AND channel = ?2");
  Result<Statement> insert_circuit = db.Prepare(
      add_missing ? "INSERT OR IGNORE INTO circuit_series (circuit) VALUES (?1)" : "SELECT 1");
  Result<Statement> select_circuit = db.Prepare("SELECT id FROM circuit_series WHERE circuit = ?1");
  for (const auto* s : {&insert_channel, &select_channel, &insert_circuit, &select_circuit}) {
    if (!s->ok()) return s->status();
  }
  Statement* add_channel = add_missing ? &*insert_channel : nullptr;
  Statement* add_circuit = add_missing ? &*insert_circuit : nullptr;
  SeriesMap map;
  std::vector<ChannelRef> channels = FlatChannels(config);
  for (const ChannelRef& ref : channels) {
    Result<std::int64_t> id =
        IdOf(add_channel, *select_channel, ref.node, &ref.channel, "register channel series");
    if (!id.ok()) return id.status();
    if (id.value() >= 0) {
      map.channel_index_of_id[id.value()] = static_cast<int>(map.channel_ids.size());
    }
    map.channel_ids.push_back(id.value());
  }
  map.circuit_of_channel.assign(channels.size(), -1);
  for (const CircuitConfig& circuit : config.circuits) {
    Result<std::int64_t> id =
        IdOf(add_circuit, *select_circuit, circuit.id, nullptr, "register circuit series");
    if (!id.ok()) return id.status();
    int circuit_index = map.CircuitCount();
    map.circuit_ids.push_back(id.value());
    std::vector<int>& members = map.channels_of_circuit.emplace_back();
    for (const ChannelRef& ref : circuit.channels) {
      for (size_t i = 0; i < channels.size(); ++i) {
        // A channel feeds at most one circuit (the config loader checks it); first wins.
        if (channels[i] == ref && map.circuit_of_channel[i] < 0) {
          map.circuit_of_channel[i] = circuit_index;
          members.push_back(static_cast<int>(i));
        }
      }
    }
  }
  return map;
}

}  // namespace

int SeriesMap::ChannelIndexOfId(std::int64_t id) const {
  auto it = channel_index_of_id.find(id);
  return it == channel_index_of_id.end() ? -1 : it->second;
}

Result<SeriesMap> RegisterSeries(Database& db, const Config& config) {
  if (Status s = db.Exec("BEGIN IMMEDIATE", "register series"); !s.ok()) return s;
  Result<SeriesMap> map = RegisterAll(db, config, true);
  Status s = map.ok() ? db.Exec("COMMIT", "register series") : map.status();
  if (!s.ok()) {
    (void)db.Exec("ROLLBACK", "roll back series");
    return s;
  }
  return map;
}

Result<SeriesMap> LookUpSeries(const Database& db, const Config& config) {
  return RegisterAll(db, config, false);
}

}  // namespace ampledger

