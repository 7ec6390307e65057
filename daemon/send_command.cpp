#include "daemon/send_command.h"

#include <chrono>
#include <ostream>

#include "config/config.h"
#include "config/wall_clock.h"
#include "daemon/ingest/node_client.h"

namespace ampledger {

namespace {

Result<std::string> KeyFromHex(const std::string& hex) {
  if (hex.size() != 64 || hex.find_first_not_of("0123456789abcdefABCDEF") != std::string::npos) {
    return Status::InvalidArgument("--key: expected 64 hex digits (a 256-bit key)");
  }
  std::string key;
  for (size_t i = 0; i < hex.size(); i += 2) {
    key.push_back(static_cast<char>(std::stoi(hex.substr(i, 2), nullptr, 16)));
  }
  return key;
}

// The node's key and encoding, from the config or the command line.
Result<NodeClientOptions> ClientOptions(const SendOptions& options) {
  NodeClientOptions client;
  client.node = options.node;
  if (options.format == "json") {
    client.encoding.format = PackFormat::kJson;
  } else if (options.format == "cbor") {
    client.encoding.format = PackFormat::kCbor;
  } else if (options.format == "cose") {
    client.encoding.format = PackFormat::kCoseMac0;
  } else {
    return Status::InvalidArgument("--format: expected cose, cbor or json, got \"" +
                                   options.format + "\"");
  }
  if (options.alg == "256/64") {
    client.encoding.alg = MacAlgorithm::kHmac256_64;
  } else if (options.alg == "256/256") {
    client.encoding.alg = MacAlgorithm::kHmac256_256;
  } else {
    return Status::InvalidArgument("--alg: expected 256/64 or 256/256, got \"" + options.alg +
                                   "\"");
  }
  if (!options.config_path.empty()) {
    Result<Config> config = LoadConfig(options.config_path);
    if (!config.ok()) return config.status();
    const NodeConfig* node = config->FindNode(options.node);
    if (node == nullptr) {
      return Status::NotFound("--node: no node \"" + options.node + "\" in " +
                              options.config_path);
    }
    client.key.assign(node->key.begin(), node->key.end());
  } else if (!options.key_hex.empty()) {
    Result<std::string> key = KeyFromHex(options.key_hex);
    if (!key.ok()) return key.status();
    client.key = *key;
  }
  if (client.encoding.format == PackFormat::kCoseMac0 && client.key.size() != 32) {
    return Status::InvalidArgument("a COSE pack needs the node's key: give --config or --key");
  }
  return client;
}

}  // namespace

int RunSend(const SendOptions& options, std::ostream& out, std::ostream& err) {
  Result<NodeClientOptions> client_options = ClientOptions(options);
  if (!client_options.ok()) {
    err << "ampledger send: " << client_options.status().message() << "\n";
    return 2;
  }
  Result<std::unique_ptr<NodeClient>> client = NodeClient::Open(options.to, *client_options);
  if (!client.ok()) {
    err << "ampledger send: " << client.status().message() << "\n";
    return 2;
  }
  ChannelSample sample;
  sample.channel = options.channel;
  sample.end_ms = WallClockMs();
  sample.duration_ms = static_cast<std::int32_t>(options.interval_seconds * 1000);
  sample.amps = options.amps;
  sample.volts = options.volts;
  sample.real_watts = options.watts;
  sample.real_register_j = options.register_joules;
  NodePack pack{options.node, options.boot, options.seq, sample.duration_ms, {sample}};
  if (Status sent = (*client)->Send(pack); !sent.ok()) {
    err << "ampledger send: " << sent.message() << "\n";
    return 1;
  }
  if ((*client)->PollAcks(options.wait_ms) == 0) {
    err << "ampledger send: no acknowledgement from " << options.to << " within "
        << options.wait_ms << " ms (wrong key, node, address, or a replayed boot/seq; the "
        << "daemon's log says which)\n";
    return 1;
  }
  out << "acknowledged: node " << options.node << " boot " << options.boot << " seq "
      << options.seq << " (" << PackFormatName(client_options->encoding.format) << ")\n";
  return 0;
}

}  // namespace ampledger
