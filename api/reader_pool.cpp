// api/reader_pool.cpp
#include "api/reader_pool.h"

namespace ampledger {

ReaderPool::Lease::~Lease() {
  if (db_) pool_->GiveBack(std::move(db_));
}

ReaderPool::ReaderPool(std::string database_path, int max_idle)
    : path_(std::move(database_path)), max_idle_(max_idle) {}

Result<ReaderPool::Lease> ReaderPool::Acquire() {
  {
    std::lock_guard lock(mu_);
    if (!idle_.empty()) {
      std::unique_ptr<Database> db = std::move(idle_.back());
      idle_.pop_back();
      return Lease(this, std::move(db));
    }
  }
  // Opened outside the lock: it reads the file, and other requests need not wait for that.
  Result<std::unique_ptr<Database>> db = Database::OpenReader(path_);
  if (!db.ok()) return db.status();
  {
    std::lock_guard lock(mu_);
    ++opened_;
  }
  return Lease(this, std::move(db.value()));
}

void ReaderPool::GiveBack(std::unique_ptr<Database> db) {
  // sqlite3_get_autocommit() is 0 inside a transaction (sqlite.org/c3ref/get_autocommit.html).
  if (sqlite3_get_autocommit(db->handle()) == 0 &&
      (!db->Exec("ROLLBACK", "end a request's read transaction").ok() ||
       sqlite3_get_autocommit(db->handle()) == 0)) {
    return;  // closed with `db`
  }
  std::lock_guard lock(mu_);
  if (static_cast<int>(idle_.size()) < max_idle_) idle_.push_back(std::move(db));
}  // else `db` closes here

int ReaderPool::idle_count() const {
  std::lock_guard lock(mu_);
  return static_cast<int>(idle_.size());
}

int ReaderPool::opened_count() const {
  std::lock_guard lock(mu_);
  return opened_;
}

}  // namespace ampledger
