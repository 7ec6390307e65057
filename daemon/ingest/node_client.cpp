#include "daemon/ingest/node_client.h"

#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

#include "daemon/ingest/ack.h"
#include "daemon/ingest/udp_receiver.h"

namespace ampledger {

Result<std::unique_ptr<NodeClient>> NodeClient::Open(const std::string& daemon_address,
                                                     NodeClientOptions options) {
  Result<PeerAddress> daemon = ResolveAddress(daemon_address);
  if (!daemon.ok()) return daemon.status();
  int fd = ::socket(daemon->address.ss_family, SOCK_DGRAM | SOCK_CLOEXEC, 0);
  if (fd < 0) return Status::IOError(std::string("socket: ") + std::strerror(errno));
  if (options.receive_buffer_bytes > 0) {
    ::setsockopt(fd, SOL_SOCKET, SO_RCVBUF, &options.receive_buffer_bytes,
                 sizeof options.receive_buffer_bytes);
  }
  if (::connect(fd, reinterpret_cast<const sockaddr*>(&daemon->address), daemon->length) < 0) {
    Status status = Status::IOError("connect " + daemon_address + ": " + std::strerror(errno));
    ::close(fd);
    return status;
  }
  return std::unique_ptr<NodeClient>(new NodeClient(fd, std::move(options)));
}

NodeClient::~NodeClient() { ::close(fd_); }

Status NodeClient::Send(const NodePack& pack, bool lose) {
  if (Status room = Room(pack.boot, pack.seq); !room.ok()) return room;
  return SendEncoded(pack.boot, pack.seq, EncodePack(pack, options_.encoding, options_.key), lose);
}

Status NodeClient::SendEncoded(std::uint32_t boot, std::uint32_t seq, std::string_view bytes,
                               bool lose) {
  if (Status room = Room(boot, seq); !room.ok()) return room;
  Unacked entry{std::string(bytes), std::chrono::steady_clock::now()};
  Status sent = lose ? Status::Ok() : Transmit(entry.bytes);
  unacked_[{boot, seq}] = std::move(entry);
  return sent;
}

Status NodeClient::Room(std::uint32_t boot, std::uint32_t seq) const {
  if (unacked_.size() >= options_.max_unacked) {
    return Status::Unavailable(std::to_string(unacked_.size()) + " packs wait for an ack");
  }
  if (!unacked_.empty()) {
    const auto& [oldest_boot, oldest_seq] = unacked_.begin()->first;
    if (oldest_boot == boot && seq - oldest_seq >= options_.max_seq_span) {
      return Status::Unavailable("seq " + std::to_string(oldest_seq) + " waits for an ack");
    }
  }
  return Status::Ok();
}

Status NodeClient::Transmit(const std::string& bytes) {
  if (::send(fd_, bytes.data(), bytes.size(), 0) < 0) {
    // ECONNREFUSED: no daemon listening yet; the pack stays queued for a resend.
    if (errno == ECONNREFUSED || errno == EAGAIN) return Status::Unavailable(std::strerror(errno));
    return Status::IOError(std::string("send: ") + std::strerror(errno));
  }
  return Status::Ok();
}

int NodeClient::PollAcks(int timeout_ms) {
  int released = 0;
  pollfd waiting{fd_, POLLIN, 0};
  if (timeout_ms != 0 && ::poll(&waiting, 1, timeout_ms) <= 0) return 0;
  char buffer[2048];
  ssize_t length;
  while ((length = ::recv(fd_, buffer, sizeof buffer, MSG_DONTWAIT)) > 0) {
    // A COSE node accepts only acknowledgements under its own key; a plain node reads plain.
    std::string_view key = options_.encoding.format == PackFormat::kCoseMac0
                               ? std::string_view(options_.key)
                               : std::string_view();
    DecodeResult<Ack> ack = DecodeAck(std::string_view(buffer, length), options_.node, key);
    if (!ack.ok()) continue;
    if (unacked_.erase({ack->boot, ack->seq}) > 0) {
      ++released;
      ++acked_;
    }
  }
  return released;
}

int NodeClient::ResendDue(int limit) {
  auto due = std::chrono::steady_clock::now() - std::chrono::milliseconds(options_.resend_after_ms);
  int resent = 0;
  for (auto& [id, entry] : unacked_) {
    if (resent >= limit) break;
    if (entry.sent_at > due) continue;
    if (!Transmit(entry.bytes).ok()) break;
    entry.sent_at = std::chrono::steady_clock::now();
    ++resent;
  }
  return resent;
}

}  // namespace ampledger
