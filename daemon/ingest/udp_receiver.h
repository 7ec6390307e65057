// daemon/ingest/udp_receiver.h
// The UDP socket sensor nodes send to: IPv4 or IPv6, address from [ingest] listen. Receives in
// batches with recvmmsg(MSG_WAITFORONE), reports datagrams larger than the size limit as
// oversize (they are truncated by the kernel, never parsed) and keeps the kernel's drop count
// (SO_RXQ_OVFL). One thread calls Receive(); SendTo() and SendAll() may be called from any
// thread.
#pragma once

#include <netinet/in.h>
#include <sys/socket.h>

#include <atomic>
#include <cstdint>
#include <functional>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "config/config.h"
#include "config/status.h"

namespace ampledger {

// Where a datagram came from; acknowledgements go back there.
struct PeerAddress {
  sockaddr_storage address{};
  socklen_t length = 0;
  std::string ToString() const;  // "192.0.2.7:4717" or "[2001:db8::7]:4717"
};

// A datagram to send (an acknowledgement) and where to.
struct OutgoingDatagram {
  std::string bytes;
  PeerAddress to;
};

struct ReceivedDatagram {
  std::span<const std::uint8_t> bytes;  // valid only during the handler call
  bool oversize = false;                // longer than max_datagram_bytes; `bytes` is cut
  PeerAddress from;
};

class UdpReceiver {
 public:
  // Binds `config.listen` ("host:port", "[v6]:port"; port 0 picks a free port).
  static Result<std::unique_ptr<UdpReceiver>> Open(const IngestConfig& config);
  ~UdpReceiver();
  UdpReceiver(const UdpReceiver&) = delete;
  UdpReceiver& operator=(const UdpReceiver&) = delete;

  // Waits up to `timeout_ms` for datagrams, then hands each one received to `handler`, in
  // order. Returns how many were handled (0 on timeout). EINTR is a timeout, not an error.
  // With timeout_ms 0 it only takes what is already waiting, in one system call.
  Result<int> Receive(int timeout_ms, const std::function<void(const ReceivedDatagram&)>& handler);

  // Sends one datagram (an acknowledgement). Fails with Unavailable if the socket buffer is full.
  Status SendTo(std::span<const std::uint8_t> bytes, const PeerAddress& to);

  // Sends `datagrams` with as few system calls as sendmmsg allows. Returns how many were sent.
  // Once the socket buffer is full the rest are not sent; one that fails otherwise (its
  // address, say) is skipped.
  std::size_t SendAll(std::span<const OutgoingDatagram> datagrams);

  // Datagrams the kernel dropped because our receive buffer was full, since Open().
  std::uint64_t kernel_drops() const { return kernel_drops_.load(std::memory_order_relaxed); }

  std::uint16_t port() const { return port_; }

 private:
  UdpReceiver(int fd, int max_datagram_bytes, std::uint16_t port);

  static constexpr int kBatch = 64;  // datagrams per recvmmsg call

  int fd_;
  int max_datagram_bytes_;
  std::uint16_t port_;
  std::vector<std::uint8_t> buffers_;  // kBatch slots of max_datagram_bytes_ + 1 bytes
  std::atomic<std::uint64_t> kernel_drops_{0};
};

// Parses "host:port" or "[v6]:port" into a socket address. Host names are resolved.
Result<PeerAddress> ResolveAddress(const std::string& host_port);

}  // namespace ampledger
