#include "daemon/ingest/udp_receiver.h"

#include <arpa/inet.h>
#include <netdb.h>
#include <poll.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>

namespace ampledger {

namespace {

Status Errno(const std::string& what) {
  return Status::IOError(what + ": " + std::strerror(errno));
}

}  // namespace

std::string PeerAddress::ToString() const {
  char host[INET6_ADDRSTRLEN] = "?";
  std::uint16_t port = 0;
  if (address.ss_family == AF_INET) {
    const auto* v4 = reinterpret_cast<const sockaddr_in*>(&address);
    ::inet_ntop(AF_INET, &v4->sin_addr, host, sizeof host);
    port = ntohs(v4->sin_port);
    return std::string(host) + ":" + std::to_string(port);
  }
  const auto* v6 = reinterpret_cast<const sockaddr_in6*>(&address);
  ::inet_ntop(AF_INET6, &v6->sin6_addr, host, sizeof host);
  port = ntohs(v6->sin6_port);
  return "[" + std::string(host) + "]:" + std::to_string(port);
}

Result<PeerAddress> ResolveAddress(const std::string& host_port) {
  Result<ListenAddress> parsed = ParseListenAddress(host_port);
  if (!parsed.ok()) return parsed.status();
  const std::string& host = parsed->host;
  const std::string port = std::to_string(parsed->port);
  addrinfo hints{};
  hints.ai_family = AF_UNSPEC;
  hints.ai_socktype = SOCK_DGRAM;
  hints.ai_flags = AI_NUMERICSERV;
  addrinfo* found = nullptr;
  int rc = ::getaddrinfo(host.empty() ? nullptr : host.c_str(), port.c_str(), &hints, &found);
  if (rc != 0) {
    return Status::InvalidArgument("cannot resolve \"" + host_port + "\": " + gai_strerror(rc));
  }
  PeerAddress peer;
  std::memcpy(&peer.address, found->ai_addr, found->ai_addrlen);
  peer.length = found->ai_addrlen;
  ::freeaddrinfo(found);
  return peer;
}

Result<std::unique_ptr<UdpReceiver>> UdpReceiver::Open(const IngestConfig& config) {
  Result<PeerAddress> local = ResolveAddress(config.listen);
  if (!local.ok()) return local.status().WithContext("ingest.listen");
  int fd = ::socket(local->address.ss_family, SOCK_DGRAM | SOCK_CLOEXEC, 0);
  if (fd < 0) return Errno("socket");
  int on = 1;
  int buffer = config.receive_buffer_bytes;
  // SO_RCVBUF is capped by net.core.rmem_max; the kernel doubles what it grants.
  ::setsockopt(fd, SOL_SOCKET, SO_RCVBUF, &buffer, sizeof buffer);
  ::setsockopt(fd, SOL_SOCKET, SO_RXQ_OVFL, &on, sizeof on);
  if (::bind(fd, reinterpret_cast<const sockaddr*>(&local->address), local->length) < 0) {
    Status status = Errno("bind " + config.listen);
    ::close(fd);
    return status;
  }
  sockaddr_storage bound{};
  socklen_t bound_length = sizeof bound;
  ::getsockname(fd, reinterpret_cast<sockaddr*>(&bound), &bound_length);
  std::uint16_t port = bound.ss_family == AF_INET
                           ? ntohs(reinterpret_cast<sockaddr_in*>(&bound)->sin_port)
                           : ntohs(reinterpret_cast<sockaddr_in6*>(&bound)->sin6_port);
  return std::unique_ptr<UdpReceiver>(new UdpReceiver(fd, config.max_datagram_bytes, port));
}

UdpReceiver::UdpReceiver(int fd, int max_datagram_bytes, std::uint16_t port)
    : fd_(fd),
      max_datagram_bytes_(max_datagram_bytes),
      port_(port),
      buffers_(static_cast<size_t>(kBatch) * (max_datagram_bytes + 1)) {}

UdpReceiver::~UdpReceiver() { ::close(fd_); }

Result<int> UdpReceiver::Receive(int timeout_ms,
                                 const std::function<void(const ReceivedDatagram&)>& handler) {
  if (timeout_ms != 0) {
    pollfd waiting{fd_, POLLIN, 0};
    int ready = ::poll(&waiting, 1, timeout_ms);
    if (ready < 0) return errno == EINTR ? 0 : Result<int>(Errno("poll"));
    if (ready == 0) return 0;
  }

  const size_t slot = static_cast<size_t>(max_datagram_bytes_) + 1;
  mmsghdr messages[kBatch] = {};
  iovec vectors[kBatch];
  PeerAddress peers[kBatch];
  alignas(cmsghdr) char controls[kBatch][CMSG_SPACE(sizeof(std::uint32_t))];
  for (int i = 0; i < kBatch; ++i) {
    vectors[i] = {buffers_.data() + i * slot, slot};
    msghdr& header = messages[i].msg_hdr;
    header.msg_iov = &vectors[i];
    header.msg_iovlen = 1;
    header.msg_name = &peers[i].address;
    header.msg_namelen = sizeof peers[i].address;
    header.msg_control = controls[i];
    header.msg_controllen = sizeof controls[i];
  }
  // Without a wait the first datagram is not waited for either (one system call, no poll).
  const int flags = MSG_WAITFORONE | (timeout_ms == 0 ? MSG_DONTWAIT : 0);
  int count = ::recvmmsg(fd_, messages, kBatch, flags, nullptr);
  if (count < 0) {
    return (errno == EINTR || errno == EAGAIN) ? 0 : Result<int>(Errno("recvmmsg"));
  }
  for (int i = 0; i < count; ++i) {
    const msghdr& header = messages[i].msg_hdr;
    for (cmsghdr* control = CMSG_FIRSTHDR(&header); control != nullptr;
         control = CMSG_NXTHDR(const_cast<msghdr*>(&header), control)) {
      if (control->cmsg_level == SOL_SOCKET && control->cmsg_type == SO_RXQ_OVFL) {
        std::uint32_t drops;
        std::memcpy(&drops, CMSG_DATA(control), sizeof drops);
        kernel_drops_.store(drops, std::memory_order_relaxed);
      }
    }
    size_t length = messages[i].msg_len;
    ReceivedDatagram datagram;
    datagram.oversize = length > static_cast<size_t>(max_datagram_bytes_) ||
                        (header.msg_flags & MSG_TRUNC) != 0;
    datagram.bytes = {buffers_.data() + i * slot, std::min(length, slot)};
    peers[i].length = header.msg_namelen;
    datagram.from = peers[i];
    handler(datagram);
  }
  return count;
}

Status UdpReceiver::SendTo(std::span<const std::uint8_t> bytes, const PeerAddress& to) {
  ssize_t sent = ::sendto(fd_, bytes.data(), bytes.size(), MSG_DONTWAIT,
                          reinterpret_cast<const sockaddr*>(&to.address), to.length);
  if (sent < 0) {
    if (errno == EAGAIN || errno == EWOULDBLOCK) return Status::Unavailable("send buffer full");
    return Errno("sendto " + to.ToString());
  }
  return Status::Ok();
}

std::size_t UdpReceiver::SendAll(std::span<const OutgoingDatagram> datagrams) {
  std::size_t next = 0;
  std::size_t delivered = 0;
  while (next < datagrams.size()) {
    mmsghdr messages[kBatch] = {};
    iovec vectors[kBatch];
    const std::size_t count = std::min<std::size_t>(kBatch, datagrams.size() - next);
    for (std::size_t i = 0; i < count; ++i) {
      const OutgoingDatagram& datagram = datagrams[next + i];
      vectors[i] = {const_cast<char*>(datagram.bytes.data()), datagram.bytes.size()};
      msghdr& header = messages[i].msg_hdr;
      header.msg_iov = &vectors[i];
      header.msg_iovlen = 1;
      header.msg_name = const_cast<sockaddr_storage*>(&datagram.to.address);
      header.msg_namelen = datagram.to.length;
    }
    int sent = ::sendmmsg(fd_, messages, static_cast<unsigned>(count), MSG_DONTWAIT);
    if (sent > 0) {
      next += static_cast<std::size_t>(sent);
      delivered += static_cast<std::size_t>(sent);
    } else if (errno == EAGAIN || errno == EWOULDBLOCK) {
      break;  // the send buffer is full: the rest would fail too
    } else {
      ++next;  // this one cannot be sent (its address, say); the others may
    }
  }
  return delivered;
}

}  // namespace ampledger
