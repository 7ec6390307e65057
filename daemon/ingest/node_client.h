// daemon/ingest/node_client.h
// The node side of the protocol (daemon/PROTOCOL.md) over a real UDP socket: sends packs to a
// daemon, keeps each one until the daemon's acknowledgement for its (boot, seq) arrives, and
// resends what stays unacknowledged. Used by `ampledger send`, the demo's simulated nodes and
// the end-to-end tests; a firmware author can read it as the reference for a node's loop.
// Packs carry absolute times, so a resent pack means exactly what it meant the first time.
// One thread at a time.
#pragma once

#include <chrono>
#include <cstdint>
#include <map>
#include <memory>
#include <string>
#include <string_view>
#include <utility>

#include "config/status.h"
#include "daemon/ingest/node_pack.h"
#include "daemon/ingest/pack_encoder.h"

namespace ampledger {

struct NodeClientOptions {
  std::string node;                // the node id
  std::string key;                 // 32 key bytes; used with PackFormat::kCoseMac0
  PackEncoding encoding;           // relative_to must be unset: the client sends absolute times
  int resend_after_ms = 1000;      // an unacknowledged pack is sent again after this long
  std::size_t max_unacked = 512;   // Send() refuses (Unavailable) beyond this many
  // Send() also refuses a seq this far or farther past the oldest unacknowledged one of the
  // same boot: the daemon's anti-replay window (ReplayWindow::kWindowSize, 1024) recognises
  // resends only that far behind its newest, so a node that ran further ahead while an
  // acknowledgement was lost could never have that pack accepted again.
  std::uint32_t max_seq_span = 1000;
  // SO_RCVBUF of the socket (capped by the system's net.core.rmem_max); 0: the system default.
  // A node with a wide window must be able to hold that many acknowledgements arriving at
  // once, or the kernel drops the rest and their packs wait resend_after_ms to go again.
  int receive_buffer_bytes = 0;
};

class NodeClient {
 public:
  // Connects a UDP socket to `daemon_address` ("host:port", "[v6]:port").
  static Result<std::unique_ptr<NodeClient>> Open(const std::string& daemon_address,
                                                  NodeClientOptions options);
  ~NodeClient();
  NodeClient(const NodeClient&) = delete;
  NodeClient& operator=(const NodeClient&) = delete;

  // Encodes `pack` and sends it, keeping it until acknowledged. With `lose` set the datagram
  // is kept but not sent, as if the network had dropped it (for tests and the demo).
  Status Send(const NodePack& pack, bool lose = false);

  // As Send(), for a pack that is already encoded: `bytes` must be EncodePack() of pack
  // (`boot`, `seq`) with this client's encoding and key. For senders that encode ahead.
  Status SendEncoded(std::uint32_t boot, std::uint32_t seq, std::string_view bytes,
                     bool lose = false);

  // Reads the acknowledgements that have arrived, waiting up to `timeout_ms` for the first
  // (0: no wait, and no poll() call).
  // Returns how many packs they released. Acknowledgements that do not verify are ignored.
  int PollAcks(int timeout_ms);

  // Sends again, oldest first, up to `limit` packs unacknowledged for resend_after_ms.
  int ResendDue(int limit);

  std::size_t unacked() const { return unacked_.size(); }
  std::uint64_t acked() const { return acked_; }

 private:
  struct Unacked {
    std::string bytes;
    std::chrono::steady_clock::time_point sent_at;
  };
  NodeClient(int fd, NodeClientOptions options) : fd_(fd), options_(std::move(options)) {}
  Status Transmit(const std::string& bytes);
  // OK if a pack (boot, seq) may be sent now (see max_unacked, max_seq_span).
  Status Room(std::uint32_t boot, std::uint32_t seq) const;

  int fd_;
  NodeClientOptions options_;
  std::map<std::pair<std::uint32_t, std::uint32_t>, Unacked> unacked_;  // by (boot, seq)
  std::uint64_t acked_ = 0;
};

}  // namespace ampledger
