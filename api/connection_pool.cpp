// api/connection_pool.cpp
#include "api/connection_pool.h"

namespace ampledger {

ConnectionPool::ConnectionPool(int min_threads, int max_threads) : max_threads_(max_threads) {
  std::lock_guard lock(mu_);
  for (int i = 0; i < min_threads; ++i) StartThread();
}

ConnectionPool::~ConnectionPool() { shutdown(); }

void ConnectionPool::StartThread() {
  ++idle_;  // counted from now: it takes work as soon as it runs
  threads_.emplace_back([this] { Work(); });
}

void ConnectionPool::enqueue(std::function<void()> fn) {
  std::lock_guard lock(mu_);
  if (stopping_) return;
  queue_.push_back(std::move(fn));
  // Each idle thread takes one queued connection; start one more for each beyond them.
  if (static_cast<int>(queue_.size()) > idle_ &&
      static_cast<int>(threads_.size()) < max_threads_) {
    StartThread();
  }
  ready_.notify_one();
}

void ConnectionPool::shutdown() {
  std::vector<std::thread> threads;
  {
    std::lock_guard lock(mu_);
    if (stopping_) return;
    stopping_ = true;
    threads.swap(threads_);
  }
  ready_.notify_all();
  for (std::thread& thread : threads) thread.join();
}

int ConnectionPool::thread_count() const {
  std::lock_guard lock(mu_);
  return static_cast<int>(threads_.size());
}

void ConnectionPool::Work() {
  std::unique_lock lock(mu_);
  for (;;) {
    ready_.wait(lock, [this] { return stopping_ || !queue_.empty(); });
    if (queue_.empty()) return;  // stopping, and nothing left to run
    std::function<void()> fn = std::move(queue_.front());
    queue_.pop_front();
    --idle_;
    lock.unlock();
    fn();
    fn = nullptr;  // the connection's captures go before the thread counts as idle
    lock.lock();
    ++idle_;
  }
}

}  // namespace ampledger
