#include "daemon/ingest/udp_receiver.h"

#include <doctest/doctest.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

#include <string>
#include <vector>

namespace ampledger {
namespace {

// A plain UDP client socket on loopback.
class LoopbackSender {
 public:
  explicit LoopbackSender(int family) : family_(family) {
    fd_ = ::socket(family, SOCK_DGRAM, 0);
    timeval timeout{2, 0};
    ::setsockopt(fd_, SOL_SOCKET, SO_RCVTIMEO, &timeout, sizeof timeout);
  }
  ~LoopbackSender() { ::close(fd_); }
  void Send(const std::string& bytes, std::uint16_t port) {
    PeerAddress to = ResolveAddress(family_ == AF_INET ? "127.0.0.1:" + std::to_string(port)
                                                       : "[::1]:" + std::to_string(port))
                         .value();
    REQUIRE(::sendto(fd_, bytes.data(), bytes.size(), 0,
                     reinterpret_cast<const sockaddr*>(&to.address), to.length) ==
            static_cast<ssize_t>(bytes.size()));
  }
  std::string Receive() {
    char buffer[2048];
    ssize_t length = ::recv(fd_, buffer, sizeof buffer, 0);
    return length > 0 ? std::string(buffer, length) : std::string();
  }

 private:
  int family_;
  int fd_;
};

std::vector<std::string> ReceiveAll(UdpReceiver& receiver, size_t expected,
                                    std::vector<bool>* oversize = nullptr,
                                    PeerAddress* last_from = nullptr) {
  std::vector<std::string> received;
  for (int attempt = 0; attempt < 50 && received.size() < expected; ++attempt) {
    Result<int> count = receiver.Receive(100, [&](const ReceivedDatagram& datagram) {
      received.emplace_back(datagram.bytes.begin(), datagram.bytes.end());
      if (oversize) oversize->push_back(datagram.oversize);
      if (last_from) *last_from = datagram.from;
    });
    REQUIRE(count.ok());
  }
  return received;
}

TEST_SUITE("ingest") {
  TEST_CASE("UdpReceiver receives a burst on IPv4 loopback in order and answers the sender") {
    IngestConfig config;
    config.listen = "127.0.0.1:0";
    auto receiver = UdpReceiver::Open(config);
    REQUIRE(receiver.ok());
    LoopbackSender sender(AF_INET);
    for (int i = 0; i < 100; ++i) sender.Send("datagram " + std::to_string(i), (*receiver)->port());

    PeerAddress from;
    std::vector<std::string> received = ReceiveAll(**receiver, 100, nullptr, &from);
    REQUIRE(received.size() == 100);
    CHECK(received.front() == "datagram 0");
    CHECK(received.back() == "datagram 99");

    const std::string ack = "ack";
    CHECK((*receiver)->SendTo({reinterpret_cast<const std::uint8_t*>(ack.data()), ack.size()},
                              from).ok());
    CHECK(sender.Receive() == "ack");
    CHECK((*receiver)->kernel_drops() == 0);
  }

  TEST_CASE("UdpReceiver on IPv6 loopback") {
    IngestConfig config;
    config.listen = "[::1]:0";
    auto receiver = UdpReceiver::Open(config);
    REQUIRE(receiver.ok());
    LoopbackSender sender(AF_INET6);
    sender.Send("six", (*receiver)->port());
    PeerAddress from;
    std::vector<std::string> received = ReceiveAll(**receiver, 1, nullptr, &from);
    REQUIRE(received.size() == 1);
    CHECK(received[0] == "six");
    CHECK(from.ToString().rfind("[::1]:", 0) == 0);
  }

  TEST_CASE("UdpReceiver marks a datagram over the size limit as oversize") {
    IngestConfig config;
    config.listen = "127.0.0.1:0";
    config.max_datagram_bytes = 100;
    auto receiver = UdpReceiver::Open(config);
    REQUIRE(receiver.ok());
    LoopbackSender sender(AF_INET);
    sender.Send(std::string(100, 'a'), (*receiver)->port());  // exactly at the limit: fine
    sender.Send(std::string(101, 'b'), (*receiver)->port());
    sender.Send(std::string(1000, 'c'), (*receiver)->port());
    std::vector<bool> oversize;
    std::vector<std::string> received = ReceiveAll(**receiver, 3, &oversize);
    REQUIRE(received.size() == 3);
    CHECK(oversize == std::vector<bool>{false, true, true});
  }

  TEST_CASE("UdpReceiver refuses a malformed listen address with the key named") {
    IngestConfig config;
    config.listen = "no-port-here";
    auto receiver = UdpReceiver::Open(config);
    REQUIRE_FALSE(receiver.ok());
    CHECK(receiver.status().message() ==
          "ingest.listen: expected \"host:port\" or \"[IPv6]:port\" with a port from 0 to "
          "65535, got \"no-port-here\"");
  }

  TEST_CASE("UdpReceiver times out quietly when nothing arrives") {
    IngestConfig config;
    config.listen = "127.0.0.1:0";
    auto receiver = UdpReceiver::Open(config);
    REQUIRE(receiver.ok());
    Result<int> count = (*receiver)->Receive(20, [](const ReceivedDatagram&) { FAIL("no datagram"); });
    REQUIRE(count.ok());
    CHECK(*count == 0);
  }
}

}  // namespace
}  // namespace ampledger
