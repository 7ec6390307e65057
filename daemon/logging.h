// daemon/logging.h
// Sets up spdlog for the process: one stderr logger. Under systemd (JOURNAL_STREAM set) each
// line starts with the syslog "<N>" priority prefix that journald understands, and no time
// stamp (journald adds its own). Call once from main() before starting threads.
#pragma once

#include <chrono>
#include <cstdint>
#include <mutex>
#include <string>

#include "config/status.h"

namespace ampledger {

// `level`: trace | debug | info | warn | error | off.
Status ConfigureLogging(const std::string& level);

// Logs at most `per_minute` warnings a minute and counts the rest, so hostile input cannot
// flood the log; the next warning allowed says how many were suppressed. Thread-safe.
class RateLimitedLog {
 public:
  explicit RateLimitedLog(int per_minute) : per_minute_(per_minute) {}
  void Warn(const std::string& message);

 private:
  const int per_minute_;
  std::mutex mu_;
  std::int64_t minute_ = -1;     // GUARDED_BY(mu_): the minute `said_` counts
  int said_ = 0;                 // GUARDED_BY(mu_)
  std::int64_t suppressed_ = 0;  // GUARDED_BY(mu_): since the last warning logged
};

}  // namespace ampledger
