// daemon/ingest/pack_encoder.h
// Builds the datagram a node sends (daemon/PROTOCOL.md) from a NodePack: SenML JSON, SenML
// CBOR, or a COSE_Mac0 around SenML CBOR. Used by `ampledger send`, the demo simulator and
// tests; the reference for a node-side encoder. Pure functions; any thread.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/ingest/cose_mac0.h"
#include "daemon/ingest/node_pack.h"
#include "daemon/ingest/senml_writer.h"

namespace ampledger {

enum class PackFormat {
  kJson,      // SenML JSON text, unauthenticated
  kCbor,      // SenML CBOR, unauthenticated
  kCoseMac0,  // COSE_Mac0 whose payload is SenML CBOR
};

const char* PackFormatName(PackFormat format);  // "json", "cbor", "cose_mac0"

// How a pack (or an acknowledgement) is put on the wire.
struct PackEncoding {
  PackFormat format = PackFormat::kCoseMac0;
  MacAlgorithm alg = MacAlgorithm::kHmac256_64;  // kCoseMac0 only
  bool tagged = true;                            // kCoseMac0 only: CBOR tag 17 in front
  // Unset: absolute times (bt + t). Set: times relative to this send moment, as a node
  // without a clock writes them (t = end - send, seconds, <= 0).
  std::optional<UnixMs> relative_to;
};

// "none", "HMAC 256/64" or "HMAC 256/256".
const char* AuthName(const PackEncoding& encoding);

// The datagram for `pack`. `key` is the node's key (used for kCoseMac0 only); the COSE kid
// is the node id. Samples with a duration other than the pack's interval carry their own ut.
std::string EncodePack(const NodePack& pack, const PackEncoding& encoding, std::string_view key);

// Puts SenML `records` on the wire as `encoding` says (for packs and acknowledgements).
std::string EncodeSenml(const std::vector<SenmlOutRecord>& records, const PackEncoding& encoding,
                        std::string_view key, std::string_view kid);

}  // namespace ampledger
