#include "daemon/sd_notify.h"

#include <sys/socket.h>
#include <sys/un.h>
#include <unistd.h>

#include <cerrno>
#include <cstdlib>
#include <cstring>

namespace ampledger {

namespace {

std::optional<long long> EnvNumber(const char* name) {
  const char* text = std::getenv(name);
  if (text == nullptr || *text == '\0') return std::nullopt;
  char* end = nullptr;
  long long value = std::strtoll(text, &end, 10);
  if (*end != '\0' || value <= 0) return std::nullopt;
  return value;
}

}  // namespace

SdNotifier::SdNotifier() {
  const char* socket_path = std::getenv("NOTIFY_SOCKET");
  if (socket_path == nullptr || (socket_path[0] != '/' && socket_path[0] != '@')) return;
  if (std::strlen(socket_path) >= sizeof(sockaddr_un::sun_path)) return;
  address_ = socket_path;
  fd_ = ::socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC, 0);

  // systemd sets WATCHDOG_PID when the watchdog is meant for one process only.
  std::optional<long long> pid = EnvNumber("WATCHDOG_PID");
  std::optional<long long> usec = EnvNumber("WATCHDOG_USEC");
  if (usec && (!pid || *pid == ::getpid())) {
    watchdog_interval_ = std::chrono::microseconds(*usec / 2);
  }
}

SdNotifier::~SdNotifier() {
  if (fd_ >= 0) ::close(fd_);
}

Status SdNotifier::Send(const std::string& message) {
  if (fd_ < 0) return Status::Ok();
  sockaddr_un address{};
  address.sun_family = AF_UNIX;
  std::memcpy(address.sun_path, address_.data(), address_.size());
  if (address.sun_path[0] == '@') address.sun_path[0] = '\0';  // abstract namespace
  socklen_t length = static_cast<socklen_t>(offsetof(sockaddr_un, sun_path) + address_.size());
  if (::sendto(fd_, message.data(), message.size(), MSG_NOSIGNAL,
               reinterpret_cast<const sockaddr*>(&address), length) < 0) {
    return Status::IOError("sd_notify to " + address_ + ": " + std::strerror(errno));
  }
  return Status::Ok();
}

}  // namespace ampledger
