// tests/config/config_test.cpp
// The flat channel index and the look-ups of Config.
#include "config/config.h"

#include <doctest/doctest.h>

#include "tests/config/config_text.h"

namespace ampledger {
namespace {

using testing::kMinimalConfig;

TEST_SUITE("config") {

TEST_CASE("channels are numbered node by node, channel by channel") {
  const std::string text = kMinimalConfig +
                           "[[node]]\nid = \"n2\"\nauth = \"plain\"\n"
                           "[[node.channel]]\nid = \"a\"\n[[node.channel]]\nid = \"b\"\n"
                           "[[node.channel]]\nid = \"c\"\n"
                           "[[circuit]]\nid = \"heater\"\nchannels = [\"n2/c\", \"n2/a\"]\n";
  Result<Config> loaded = ParseConfig(text, "site.toml");
  REQUIRE(loaded.ok());
  const Config& config = *loaded;

  CHECK(config.ChannelCount() == 5);
  CHECK(config.ChannelAt(0) == ChannelRef{"n1", "ct1"});
  CHECK(config.ChannelAt(1) == ChannelRef{"n1", "ct2"});
  CHECK(config.ChannelAt(2) == ChannelRef{"n2", "a"});
  CHECK(config.ChannelAt(4) == ChannelRef{"n2", "c"});
  for (int i = 0; i < config.ChannelCount(); ++i) {
    CHECK(config.FindChannelIndex(config.ChannelAt(i)) == i);
  }
  CHECK(config.FindChannelIndex("n2", "b") == 3);
  CHECK(config.FindChannelIndex(ChannelRef{"n2", "ct1"}) == -1);
  CHECK(config.FindChannelIndex(ChannelRef{"n3", "a"}) == -1);
  CHECK(config.NodeOfChannel(3) == 1);
  CHECK(&config.ChannelSettingsAt(3) == &config.nodes[1].channels[1]);

  CHECK(config.FindCircuitIndex("c1") == 0);
  CHECK(config.FindCircuitIndex("heater") == 1);
  CHECK(config.FindCircuitIndex("oven") == -1);
  CHECK(config.FindNodeIndex("n2") == 1);
  CHECK(config.FindNodeIndex("n9") == -1);
  CHECK(config.CircuitOfChannel(0) == 0);
  CHECK(config.CircuitOfChannel(1) == -1);  // ct2 feeds no circuit
  CHECK(config.CircuitOfChannel(2) == 1);
  CHECK(config.CircuitOfChannel(3) == -1);
  CHECK(config.CircuitOfChannel(4) == 1);
  CHECK(config.ChannelsOfCircuit(1) == std::vector<int>{4, 2});  // the circuit's own order
}

TEST_CASE("a copy of a Config keeps a working index") {
  Result<Config> loaded = ParseConfig(kMinimalConfig, "site.toml");
  REQUIRE(loaded.ok());
  Config copy = *loaded;
  loaded = ParseConfig(kMinimalConfig + "[log]\nlevel = \"debug\"\n", "site.toml");
  CHECK(copy.ChannelCount() == 2);
  CHECK(copy.FindChannelIndex("n1", "ct2") == 1);
  CHECK(&copy.ChannelSettingsAt(1) == &copy.nodes[0].channels[1]);
}

TEST_CASE("a Config built by hand is indexed by IndexChannels") {
  Config config;
  NodeConfig node;
  node.id = "n";
  node.channels.push_back(ChannelConfig{"x"});
  node.channels.push_back(ChannelConfig{"y"});
  config.nodes.push_back(node);
  CircuitConfig circuit;
  circuit.id = "k";
  circuit.channels.push_back(ChannelRef{"n", "y"});
  config.circuits.push_back(circuit);
  CHECK(config.ChannelCount() == 0);
  config.IndexChannels();
  CHECK(config.ChannelCount() == 2);
  CHECK(config.FindChannelIndex("n", "y") == 1);
  CHECK(config.CircuitOfChannel(1) == 0);
  CHECK(config.FindNode("n") == &config.nodes[0]);
  CHECK(config.FindCircuit("k") == &config.circuits[0]);
  CHECK(config.FindUnit("k") == nullptr);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
