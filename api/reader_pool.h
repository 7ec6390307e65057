// api/reader_pool.h
// Reader connections (Database::OpenReader) shared by the API's requests. Opening one per
// request costs the open, the schema version check and a parse of the whole schema on the
// first statement, and starts from a cold page cache; query_scale (issue 9) measured those
// at a quarter of a /v1/site request's CPU. A request leases a connection, and the lease gives
// it back when the request ends; at most `max_idle` are kept (each holds three file
// descriptors and its page cache), so an HTTP pool grown to hundreds of threads by slow
// clients does not keep hundreds of connections.
// A connection is given back only outside a transaction: one left open (a handler returning
// between BEGIN and COMMIT) is rolled back, or the connection closed if that fails, so no
// request sees another's snapshot and none pins the WAL.
// Acquire() may be called from any thread; a Lease is used by the thread that acquired it.
#pragma once

#include <memory>
#include <mutex>
#include <string>
#include <vector>

#include "config/status.h"
#include "storage/database.h"

namespace ampledger {

class ReaderPool {
 public:
  // One leased connection; gives it back to the pool when destroyed.
  class Lease {
   public:
    Lease(Lease&& other) noexcept : pool_(other.pool_), db_(std::move(other.db_)) {}
    Lease& operator=(Lease&&) = delete;
    ~Lease();
    Database& db() const { return *db_; }

   private:
    friend class ReaderPool;
    Lease(ReaderPool* pool, std::unique_ptr<Database> db) : pool_(pool), db_(std::move(db)) {}
    ReaderPool* pool_;
    std::unique_ptr<Database> db_;
  };

  // 1 <= max_idle.
  ReaderPool(std::string database_path, int max_idle);
  ReaderPool(const ReaderPool&) = delete;
  ReaderPool& operator=(const ReaderPool&) = delete;

  // An idle connection, or a new one (OpenReader's errors when it cannot be opened). The
  // pool must outlive the lease.
  Result<Lease> Acquire();

  int idle_count() const;
  int opened_count() const;  // connections opened since the pool was made

 private:
  void GiveBack(std::unique_ptr<Database> db);

  const std::string path_;
  const int max_idle_;
  mutable std::mutex mu_;
  std::vector<std::unique_ptr<Database>> idle_;  // GUARDED_BY(mu_)
  int opened_ = 0;                               // GUARDED_BY(mu_)
};

}  // namespace ampledger
