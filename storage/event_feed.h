// storage/event_feed.h
// EventFeed tells waiting readers that new alert events were committed: the alert recorder
// publishes the newest committed event id after each commit, and long-poll requests and the
// webhook sender wait on a condition variable until it passes their cursor (no polling of the
// database). Any thread may call any method.
#pragma once

#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <mutex>

#include "config/status.h"

namespace ampledger {

class EventFeed {
 public:
  using Clock = std::chrono::steady_clock;

  // The newest committed event id is now `id` (ids only grow; a smaller id is ignored).
  void Publish(std::int64_t id);
  std::int64_t newest() const;

  // Blocks until newest() > cursor, `deadline` passes, Nudge() or Close() is called; returns
  // newest(). Unavailable, at once, when `max_waiters` counted callers are already waiting
  // (so long-polls cannot take every HTTP worker), or after Close(). max_waiters <= 0: an
  // internal reader (the webhook sender), neither limited nor counted.
  Result<std::int64_t> WaitAfter(std::int64_t cursor, Clock::time_point deadline,
                                 int max_waiters);

  // Wakes every waiter once (a reader that is stopping).
  void Nudge();

  // Wakes every waiter and refuses later waits (shutdown).
  void Close();

 private:
  mutable std::mutex mu_;
  std::condition_variable changed_;
  std::int64_t newest_ = 0;  // GUARDED_BY(mu_)
  int waiters_ = 0;          // GUARDED_BY(mu_): counted waiters
  std::uint64_t nudges_ = 0; // GUARDED_BY(mu_)
  bool closed_ = false;      // GUARDED_BY(mu_)
};

}  // namespace ampledger
