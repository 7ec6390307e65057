// storage/statement_cache.cpp
#include "storage/statement_cache.h"

#include <utility>

namespace ampledger {

sqlite3_stmt* StatementCache::Take(std::string_view sql) {
  auto slot = slots_.find(sql);
  return slot == slots_.end() ? nullptr : std::exchange(slot->second, nullptr);
}

void StatementCache::Park(sqlite3_stmt* stmt) {
  if (stmt == nullptr) return;
  sqlite3_reset(stmt);
  sqlite3_clear_bindings(stmt);
  const std::string_view sql = sqlite3_sql(stmt);
  auto slot = slots_.find(sql);
  if (slot == slots_.end() && slots_.size() < capacity_) {
    slot = slots_.emplace(std::string(sql), nullptr).first;
  }
  if (slot != slots_.end() && slot->second == nullptr) {
    slot->second = stmt;
  } else {
    sqlite3_finalize(stmt);
  }
}

void StatementCache::Clear() {
  for (auto& [sql, stmt] : slots_) sqlite3_finalize(std::exchange(stmt, nullptr));
}

std::size_t StatementCache::parked_count() const {
  std::size_t count = 0;
  for (const auto& [sql, stmt] : slots_) count += stmt != nullptr ? 1 : 0;
  return count;
}

}  // namespace ampledger
