// daemon/sd_notify.h
// The systemd notification protocol (sd_notify(3)), spoken directly: one datagram per message
// to the AF_UNIX socket named by $NOTIFY_SOCKET. No libsystemd needed. When the variable is
// unset (not run by systemd) every call does nothing. Thread-safe: each call is one sendto().
#pragma once

#include <chrono>
#include <optional>
#include <string>

#include "config/status.h"

namespace ampledger {

class SdNotifier {
 public:
  // Reads NOTIFY_SOCKET and WATCHDOG_USEC (and WATCHDOG_PID, which must match us if set).
  SdNotifier();
  SdNotifier(const SdNotifier&) = delete;
  SdNotifier& operator=(const SdNotifier&) = delete;
  ~SdNotifier();

  bool enabled() const { return fd_ >= 0; }

  // How often to send WATCHDOG=1: half of WATCHDOG_USEC, as systemd recommends; nullopt when
  // systemd's watchdog is off.
  std::optional<std::chrono::microseconds> watchdog_interval() const { return watchdog_interval_; }

  Status Ready() { return Send("READY=1"); }
  Status Stopping() { return Send("STOPPING=1"); }
  Status Watchdog() { return Send("WATCHDOG=1"); }
  Status Describe(const std::string& text) { return Send("STATUS=" + text); }  // STATUS=...

  // Sends `message` as given ("KEY=VALUE\n..."). Errors are IOError; a disabled notifier is OK.
  Status Send(const std::string& message);

 private:
  int fd_ = -1;
  std::string address_;  // socket path; a leading '@' means the abstract namespace
  std::optional<std::chrono::microseconds> watchdog_interval_;
};

}  // namespace ampledger
