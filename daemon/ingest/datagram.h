// daemon/ingest/datagram.h
// The whole receive-side decoding of one UDP datagram from a node, without the socket:
// size limit, format (SenML JSON, SenML CBOR, COSE_Mac0 around SenML CBOR), authentication
// under the node's key, SenML resolution, our pack rules and the clock window. The anti-replay
// check is the caller's next step (replay_window.h), as it needs the node's stored state.
// Pure functions; any thread.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "config/config.h"
#include "daemon/ingest/node_pack.h"
#include "daemon/ingest/pack_encoder.h"
#include "daemon/ingest/refusal.h"

namespace ampledger {

struct DecodedDatagram {
  NodePack pack;
  // How it came: format, and for COSE_Mac0 the algorithm and whether tag 17 was present.
  // The acknowledgement is sent with the same encoding (see ack.h). relative_to is unset.
  PackEncoding encoding;
  std::string kid;  // the COSE kid ("" for plain SenML); equals pack.node
};

// Which of the three forms `bytes` is, from its first bytes: '[' after optional JSON
// whitespace is JSON; a CBOR tag (except 55799, self-described CBOR) or an array of four
// starting with a byte string is COSE_Mac0; anything else is tried as SenML CBOR.
PackFormat ClassifyDatagram(std::string_view bytes);

// Decodes and checks one datagram received at `now` against the configured `nodes`.
// Refusals, in the order they are checked:
//   oversize; then for COSE_Mac0: malformed/unsupported (structure, alg), unknown_node (kid),
//   bad_tag, then the SenML payload; for plain SenML: malformed/unsupported (syntax),
//   unknown_node (base name), auth_required (node configured for COSE_Mac0);
//   then the pack rules: malformed, mixed_nodes, unknown_record, unit_mismatch,
//   out_of_range, clock; kid_mismatch; unknown_channel.
DecodeResult<DecodedDatagram> DecodeDatagram(std::string_view bytes, UnixMs now,
                                             const std::vector<NodeConfig>& nodes,
                                             const IngestConfig& limits);

}  // namespace ampledger
