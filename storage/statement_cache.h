// storage/statement_cache.h
// Finished statements of one connection kept for reuse, keyed by their SQL text. The API's
// reader connections are pooled (api/reader_pool.h) and answer the same few queries again and
// again; compiling their SQL each time was about a sixth of a year-long /v1/series request's
// CPU (query_scale, issue 9). A statement is parked reset and with its bindings cleared, so
// reusing one is the same as preparing it anew, and a parked one holds no transaction open.
// sqlite3_prepare_v3 statements recompile themselves after a schema change
// (sqlite.org/c3ref/prepare.html), so a parked one never runs against an old schema.
// Used by the one thread that uses its connection; Clear() before the connection closes.
#pragma once

#include <sqlite3.h>

#include <cstddef>
#include <functional>
#include <string>
#include <string_view>
#include <unordered_map>

namespace ampledger {

class StatementCache {
 public:
  // At most `capacity` SQL texts get a slot; a statement with no slot, or whose slot is
  // full, is finalized instead, so SQL built with values in it cannot grow the cache.
  explicit StatementCache(std::size_t capacity) : capacity_(capacity) {}
  ~StatementCache() { Clear(); }
  StatementCache(const StatementCache&) = delete;
  StatementCache& operator=(const StatementCache&) = delete;

  // The parked statement for exactly `sql`, now owned by the caller; nullptr if none.
  sqlite3_stmt* Take(std::string_view sql);
  // Takes ownership of `stmt` (nullptr is ignored): resets it and parks it under its SQL text
  // (sqlite3_sql), or finalizes it.
  void Park(sqlite3_stmt* stmt);
  // Finalizes every parked statement.
  void Clear();

  std::size_t parked_count() const;

 private:
  struct Hash {
    using is_transparent = void;
    std::size_t operator()(std::string_view text) const {
      return std::hash<std::string_view>{}(text);
    }
  };
  const std::size_t capacity_;
  // One slot per SQL text seen, nullptr while its statement is taken: the texts stay, so taking
  // and parking again allocates nothing.
  std::unordered_map<std::string, sqlite3_stmt*, Hash, std::equal_to<>> slots_;
};

}  // namespace ampledger
