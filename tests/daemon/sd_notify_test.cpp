#include "daemon/sd_notify.h"

#include <doctest/doctest.h>
#include <stdlib.h>
#include <sys/socket.h>
#include <sys/un.h>
#include <unistd.h>

#include <cstring>
#include <string>

#include "test_util.h"

namespace ampledger {
namespace {

// A datagram socket standing where systemd's notification socket would be.
class FakeSystemdSocket {
 public:
  explicit FakeSystemdSocket(const std::string& path) {
    fd_ = ::socket(AF_UNIX, SOCK_DGRAM, 0);
    sockaddr_un address{};
    address.sun_family = AF_UNIX;
    std::strncpy(address.sun_path, path.c_str(), sizeof address.sun_path - 1);
    REQUIRE(::bind(fd_, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
    timeval timeout{2, 0};
    ::setsockopt(fd_, SOL_SOCKET, SO_RCVTIMEO, &timeout, sizeof timeout);
  }
  ~FakeSystemdSocket() { ::close(fd_); }
  std::string Receive() {
    char buffer[256];
    ssize_t length = ::recv(fd_, buffer, sizeof buffer, 0);
    return length > 0 ? std::string(buffer, length) : std::string();
  }

 private:
  int fd_ = -1;
};

TEST_SUITE("daemon") {
  TEST_CASE("SdNotifier sends READY, WATCHDOG and STOPPING to NOTIFY_SOCKET") {
    testing::TempDir dir;
    FakeSystemdSocket systemd(dir.File("notify"));
    ::setenv("NOTIFY_SOCKET", dir.File("notify").c_str(), 1);
    ::setenv("WATCHDOG_USEC", "10000000", 1);
    ::unsetenv("WATCHDOG_PID");
    SdNotifier notifier;
    ::unsetenv("NOTIFY_SOCKET");
    ::unsetenv("WATCHDOG_USEC");

    REQUIRE(notifier.enabled());
    // systemd recommends pinging at half the watchdog period (sd_watchdog_enabled(3)).
    CHECK(notifier.watchdog_interval() == std::chrono::microseconds(5'000'000));
    CHECK(notifier.Ready().ok());
    CHECK(systemd.Receive() == "READY=1");
    CHECK(notifier.Watchdog().ok());
    CHECK(systemd.Receive() == "WATCHDOG=1");
    CHECK(notifier.Stopping().ok());
    CHECK(systemd.Receive() == "STOPPING=1");
  }

  TEST_CASE("SdNotifier without NOTIFY_SOCKET does nothing and succeeds") {
    ::unsetenv("NOTIFY_SOCKET");
    SdNotifier notifier;
    CHECK_FALSE(notifier.enabled());
    CHECK(notifier.Ready().ok());
    CHECK_FALSE(notifier.watchdog_interval().has_value());
  }
}

}  // namespace
}  // namespace ampledger
