// tests/storage/series_test.cpp
#include "storage/series.h"

#include <doctest/doctest.h>

#include "test_util.h"

namespace ampledger {
namespace {

NodeConfig Node(const std::string& id, const std::vector<std::string>& channels) {
  NodeConfig node;
  node.id = id;
  for (const std::string& channel : channels) node.channels.emplace_back().id = channel;
  return node;
}

CircuitConfig Circuit(const std::string& id, const std::vector<ChannelRef>& channels) {
  CircuitConfig circuit;
  circuit.id = id;
  circuit.channels = channels;
  return circuit;
}

Config TwoNodes(bool reversed) {
  Config config;
  NodeConfig a = Node("panel", {"ct1", "ct2"});
  NodeConfig b = Node("garage", {"ct1"});
  config.nodes = reversed ? std::vector<NodeConfig>{b, a} : std::vector<NodeConfig>{a, b};
  CircuitConfig dryer = Circuit("dryer", {{"panel", "ct1"}, {"panel", "ct2"}});
  CircuitConfig door = Circuit("garage-door", {{"garage", "ct1"}});
  config.circuits = reversed ? std::vector<CircuitConfig>{door, dryer}
                             : std::vector<CircuitConfig>{dryer, door};
  return config;
}

TEST_SUITE("storage") {

TEST_CASE("series ids are stable across restarts and config reorders") {
  testing::TempDir dir;
  StorageConfig storage;
  storage.path = dir.File("a.db");
  Result<std::unique_ptr<Database>> db = Database::Open(storage);
  REQUIRE(db.ok());
  Result<SeriesMap> first = RegisterSeries(**db, TwoNodes(false));
  REQUIRE(first.ok());
  CHECK(first->ChannelCount() == 3);
  CHECK(first->circuit_of_channel == std::vector<int>{0, 0, 1});
  CHECK(first->channels_of_circuit[0] == std::vector<int>{0, 1});
  db.value().reset();

  Result<std::unique_ptr<Database>> reopened = Database::Open(storage);
  REQUIRE(reopened.ok());
  Result<SeriesMap> second = RegisterSeries(**reopened, TwoNodes(true));
  REQUIRE(second.ok());
  // Reversed: garage/ct1 is flat channel 0 now, panel/ct1 and ct2 are 1 and 2.
  CHECK(second->channel_ids[0] == first->channel_ids[2]);
  CHECK(second->channel_ids[1] == first->channel_ids[0]);
  CHECK(second->channel_ids[2] == first->channel_ids[1]);
  CHECK(second->circuit_ids[0] == first->circuit_ids[1]);
  CHECK(second->circuit_ids[1] == first->circuit_ids[0]);
  CHECK(second->ChannelIndexOfId(first->channel_ids[2]) == 0);
  CHECK(second->ChannelIndexOfId(9999) == -1);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
