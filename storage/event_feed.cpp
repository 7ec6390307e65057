// storage/event_feed.cpp
#include "storage/event_feed.h"

#include <string>

namespace ampledger {

void EventFeed::Publish(std::int64_t id) {
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (id <= newest_) return;
    newest_ = id;
  }
  changed_.notify_all();
}

std::int64_t EventFeed::newest() const {
  std::lock_guard<std::mutex> lock(mu_);
  return newest_;
}

Result<std::int64_t> EventFeed::WaitAfter(std::int64_t cursor, Clock::time_point deadline,
                                          int max_waiters) {
  std::unique_lock<std::mutex> lock(mu_);
  if (closed_) return Status::Unavailable("the daemon is stopping");
  if (newest_ > cursor) return newest_;
  const bool counted = max_waiters > 0;
  if (counted && waiters_ >= max_waiters) {
    return Status::Unavailable(std::to_string(waiters_) +
                               " requests are already waiting for events; try again later");
  }
  if (counted) ++waiters_;
  const std::uint64_t nudges = nudges_;
  changed_.wait_until(lock, deadline,
                      [&] { return closed_ || newest_ > cursor || nudges_ != nudges; });
  if (counted) --waiters_;
  return newest_;
}

void EventFeed::Nudge() {
  {
    std::lock_guard<std::mutex> lock(mu_);
    ++nudges_;
  }
  changed_.notify_all();
}

void EventFeed::Close() {
  {
    std::lock_guard<std::mutex> lock(mu_);
    closed_ = true;
  }
  changed_.notify_all();
}

}  // namespace ampledger
