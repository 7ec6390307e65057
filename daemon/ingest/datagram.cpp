// daemon/ingest/datagram.cpp
#include "daemon/ingest/datagram.h"

#include "daemon/ingest/cose_mac0.h"
#include "daemon/ingest/senml.h"

namespace ampledger {
namespace {

const NodeConfig* FindNode(const std::vector<NodeConfig>& nodes, std::string_view id) {
  for (const NodeConfig& node : nodes) {
    if (node.id == id) return &node;
  }
  return nullptr;
}

std::string_view KeyOf(const NodeConfig& node) {
  return {reinterpret_cast<const char*>(node.key.data()), node.key.size()};
}

// The node part of the first record's name (the pack has records), to find the node before
// reading the pack.
std::string FirstNodeId(const SenmlPack& pack) {
  const std::string& name = pack.records[0].name;
  return name.substr(0, name.find('/'));
}

std::optional<Refusal> CheckChannels(const NodePack& pack, const NodeConfig& node) {
  for (const ChannelSample& sample : pack.samples) {
    bool known = false;
    for (const ChannelConfig& channel : node.channels) known = known || channel.id == sample.channel;
    if (!known) {
      return Refuse(RefusalReason::kUnknownChannel,
                    "node \"" + node.id + "\" has no channel \"" + sample.channel + "\"");
    }
  }
  return std::nullopt;
}

bool IsJsonSpace(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }

}  // namespace

PackFormat ClassifyDatagram(std::string_view bytes) {
  std::size_t i = 0;
  while (i < bytes.size() && IsJsonSpace(bytes[i])) ++i;
  if (i < bytes.size() && bytes[i] == '[') return PackFormat::kJson;
  if (bytes.empty()) return PackFormat::kCbor;
  const auto first = static_cast<std::uint8_t>(bytes[0]);
  const bool self_described = bytes.substr(0, 3) == std::string_view("\xd9\xd9\xf7", 3);
  if ((first >> 5) == 6 && !self_described) return PackFormat::kCoseMac0;
  if (first == 0x84 && bytes.size() > 1 && (static_cast<std::uint8_t>(bytes[1]) >> 5) == 2) {
    return PackFormat::kCoseMac0;
  }
  return PackFormat::kCbor;
}

DecodeResult<DecodedDatagram> DecodeDatagram(std::string_view bytes, UnixMs now,
                                             const std::vector<NodeConfig>& nodes,
                                             const IngestConfig& limits) {
  if (bytes.size() > static_cast<std::size_t>(limits.max_datagram_bytes)) {
    return Refuse(RefusalReason::kOversize, std::to_string(bytes.size()) + " bytes > " +
                                                std::to_string(limits.max_datagram_bytes));
  }
  const double now_seconds = static_cast<double>(now) / 1000.0;
  DecodedDatagram out;
  out.encoding.format = ClassifyDatagram(bytes);
  const NodeConfig* node = nullptr;
  std::optional<DecodeResult<SenmlPack>> senml;
  if (out.encoding.format == PackFormat::kCoseMac0) {
    DecodeResult<CoseMac0> cose = ParseCoseMac0(bytes);
    if (!cose.ok()) return cose.refusal();
    if (cose->kid.empty()) return Refuse(RefusalReason::kMalformed, "COSE_Mac0: no kid");
    node = FindNode(nodes, cose->kid);
    if (!node) return Refuse(RefusalReason::kUnknownNode, "kid \"" + cose->kid + "\"");
    if (!VerifyCoseMac0(*cose, KeyOf(*node))) {
      return Refuse(RefusalReason::kBadTag, "node \"" + node->id + "\": tag does not verify");
    }
    out.encoding.alg = cose->alg;
    out.encoding.tagged = cose->tagged;
    out.kid = cose->kid;
    senml.emplace(DecodeSenmlCbor(cose->payload, now_seconds));
    if (!senml->ok()) return senml->refusal();
  } else {
    senml.emplace(out.encoding.format == PackFormat::kJson ? DecodeSenmlJson(bytes, now_seconds)
                                                           : DecodeSenmlCbor(bytes, now_seconds));
    if (!senml->ok()) return senml->refusal();
    if (senml->value().records.empty()) return Refuse(RefusalReason::kMalformed, "empty pack");
    const std::string id = FirstNodeId(senml->value());
    node = FindNode(nodes, id);
    if (!node) return Refuse(RefusalReason::kUnknownNode, "base name node \"" + id + "\"");
    if (node->auth != AuthMode::kPlain) {
      return Refuse(RefusalReason::kAuthRequired,
                    "node \"" + node->id + "\" must send COSE_Mac0");
    }
  }
  DecodeResult<NodePack> pack = InterpretNodePack(senml->value(), now, limits);
  if (!pack.ok()) return pack.refusal();
  if (!out.kid.empty() && pack->node != out.kid) {
    return Refuse(RefusalReason::kKidMismatch,
                  "kid \"" + out.kid + "\" but base name node \"" + pack->node + "\"");
  }
  if (auto refusal = CheckChannels(pack.value(), *node)) return *refusal;
  out.pack = std::move(pack).value();
  return out;
}

}  // namespace ampledger
