// tests/api/connection_pool_test.cpp
// The HTTP task queue grows past its minimum while every thread is held (slow or idle
// connections), up to its maximum, and only then queues.
#include "api/connection_pool.h"

#include <doctest/doctest.h>

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <mutex>

namespace ampledger {
namespace {

// Tasks that hold their thread until released, counting how many run at once.
struct HeldTasks {
  std::mutex mu;
  std::condition_variable changed;
  int running = 0;
  int most = 0;
  int finished = 0;
  bool released = false;

  std::function<void()> Task() {
    return [this] {
      std::unique_lock lock(mu);
      most = std::max(most, ++running);
      changed.notify_all();
      changed.wait(lock, [this] { return released; });
      --running;
      ++finished;
      changed.notify_all();
    };
  }
  // True once `n` tasks run at the same time (within 10 s).
  bool WaitRunning(int n) {
    std::unique_lock lock(mu);
    return changed.wait_for(lock, std::chrono::seconds(10), [&] { return running >= n; });
  }
  void Release() {
    std::lock_guard lock(mu);
    released = true;
    changed.notify_all();
  }
};

TEST_SUITE("api") {

TEST_CASE("connection pool: 32 held connections each get a thread beyond the 4 kept") {
  HeldTasks tasks;
  ConnectionPool pool(4, 64);
  CHECK(pool.thread_count() == 4);
  for (int i = 0; i < 32; ++i) pool.enqueue(tasks.Task());
  CHECK(tasks.WaitRunning(32));
  CHECK(pool.thread_count() == 32);
  tasks.Release();
  pool.shutdown();
  CHECK(tasks.finished == 32);
}

TEST_CASE("connection pool: at its maximum, connections wait for a thread and all run") {
  HeldTasks tasks;
  ConnectionPool pool(2, 8);
  for (int i = 0; i < 20; ++i) pool.enqueue(tasks.Task());
  CHECK(tasks.WaitRunning(8));
  CHECK(pool.thread_count() == 8);
  tasks.Release();
  pool.shutdown();  // runs what is queued first
  CHECK(tasks.finished == 20);
  CHECK(tasks.most == 8);
}

TEST_CASE("connection pool: idle threads take new work before any thread is added") {
  ConnectionPool pool(3, 64);
  std::atomic<int> done{0};
  for (int round = 0; round < 50; ++round) {
    pool.enqueue([&] { ++done; });
    const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(10);
    while (done.load() <= round && std::chrono::steady_clock::now() < until) {
      std::this_thread::yield();
    }
  }
  CHECK(done.load() == 50);
  CHECK(pool.thread_count() == 3);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
