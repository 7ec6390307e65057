// daemon/ingest/ack.h
// The acknowledgement the daemon sends back for each datagram whose readings are durable
// (daemon/PROTOCOL.md, "Acknowledgement"): a SenML pack naming the node, boot and seq,
//   [{"bn":"<node>/","n":"ack_boot","v":<boot>},{"n":"ack_seq","v":<seq>}]
// in the same encoding as the datagram (JSON, CBOR, or COSE_Mac0 with the same algorithm,
// tag-17 choice and the node's key; kid = node id). The record names differ from a data
// pack's, so an acknowledgement reflected back to the daemon is refused (unknown_record).
// Pure functions; any thread.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

#include "daemon/ingest/pack_encoder.h"
#include "daemon/ingest/refusal.h"

namespace ampledger {

struct Ack {
  std::string node;
  std::uint32_t boot = 0;
  std::uint32_t seq = 0;
  bool operator==(const Ack&) const = default;
};

// `encoding` is DecodedDatagram::encoding of the datagram being acknowledged; `key` the
// node's key (used for COSE_Mac0 only).
std::string EncodeAck(const Ack& ack, const PackEncoding& encoding, std::string_view key);

// Node side: reads an acknowledgement meant for node `node`. With a non-empty `key` only a
// COSE_Mac0 that verifies under it is accepted (auth_required, bad_tag otherwise); with an
// empty key, plain JSON or CBOR acknowledgements are read.
DecodeResult<Ack> DecodeAck(std::string_view bytes, std::string_view node, std::string_view key);

}  // namespace ampledger
