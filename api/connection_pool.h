// api/connection_pool.h
// The HTTP server's task queue. cpp-httplib 0.11 serves a connection on one thread from
// accept to close, including while a keep-alive client sits idle (up to 5 s) or a slow client
// trickles its request in. A fixed pool of N threads is held by N such connections, and
// every other client, however well-behaved, waits behind them. This pool starts `min_threads`
// and adds a thread whenever a connection arrives with none idle, up to `max_threads`; only
// beyond that do connections wait. Threads are kept once started (an idle one costs its stack's
// touched pages) and joined by shutdown().
// enqueue() is called by httplib's accept thread; shutdown() once, by httplib's listen loop.
#pragma once

#include <httplib.h>

#include <condition_variable>
#include <deque>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

namespace ampledger {

class ConnectionPool : public httplib::TaskQueue {
 public:
  // 1 <= min_threads <= max_threads.
  ConnectionPool(int min_threads, int max_threads);
  ~ConnectionPool() override;
  ConnectionPool(const ConnectionPool&) = delete;
  ConnectionPool& operator=(const ConnectionPool&) = delete;

  // Runs `fn` on an idle thread, a new one, or (at max_threads) the first to become idle.
  void enqueue(std::function<void()> fn) override;
  // Runs what is queued, then joins every thread. Further enqueue() calls are dropped.
  void shutdown() override;

  int thread_count() const;

 private:
  void Work();
  void StartThread();  // with mu_ held

  const int max_threads_;
  mutable std::mutex mu_;
  std::condition_variable ready_;
  std::deque<std::function<void()>> queue_;  // GUARDED_BY(mu_)
  std::vector<std::thread> threads_;         // GUARDED_BY(mu_)
  int idle_ = 0;                             // GUARDED_BY(mu_): threads not running a task
  bool stopping_ = false;                    // GUARDED_BY(mu_)
};

}  // namespace ampledger
