// storage/statement.h
// A prepared SQLite statement owned by one connection: bind, step, read columns, reset.
// Used by one thread at a time, like the connection it belongs to. Internal to storage/.
#pragma once

#include <sqlite3.h>

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "config/status.h"
#include "storage/statement_cache.h"

namespace ampledger {

// Turns SQLite's result code `rc` into a Status naming `path` and what was being done:
//   "/var/lib/ampledger/ampledger.db: insert reading: database or disk is full"
// SQLITE_CORRUPT and SQLITE_NOTADB give Corruption, SQLITE_BUSY/LOCKED Unavailable, the rest
// IOError.
Status SqliteStatus(sqlite3* db, int rc, const std::string& path, std::string_view what);

class Statement {
 public:
  Statement() = default;
  ~Statement();
  Statement(Statement&& other) noexcept;
  Statement& operator=(Statement&& other) noexcept;
  Statement(const Statement&) = delete;
  Statement& operator=(const Statement&) = delete;

  // Compiles `sql` on `db`, or takes it from `cache` (may be null) and parks it there again
  // when this statement is done with. `db`, `path` (which errors name) and `cache` must
  // outlive this.
  static Result<Statement> Prepare(sqlite3* db, const std::string& path, std::string_view sql,
                                   StatementCache* cache = nullptr);

  // Parameters are numbered from 1.
  void Bind(int index, std::int64_t value);
  void Bind(int index, double value);
  void Bind(int index, std::string_view text);
  void BindBlob(int index, std::string_view bytes);
  void Bind(int index, const std::optional<double>& value);  // NULL when absent
  void BindNull(int index);

  // Runs one step: true with a row, false when done; errors name `what`. A statement that
  // fails or finishes must be Reset() before it runs again.
  Result<bool> Step(std::string_view what);
  // Step() until done, then Reset(); for statements that return no rows.
  Status Run(std::string_view what);
  void Reset();  // also clears bindings

  std::int64_t Int(int column) const;
  double Double(int column) const;
  std::optional<double> OptionalDouble(int column) const;  // NULL -> nullopt
  std::string Text(int column) const;
  std::string Blob(int column) const;
  bool IsNull(int column) const;

 private:
  Statement(sqlite3* db, sqlite3_stmt* stmt, const std::string* path, StatementCache* cache)
      : db_(db), stmt_(stmt), path_(path), cache_(cache) {}
  void Release();  // parks or finalizes stmt_

  sqlite3* db_ = nullptr;
  sqlite3_stmt* stmt_ = nullptr;
  const std::string* path_ = nullptr;
  StatementCache* cache_ = nullptr;
};

// Runs `sql` (one or more statements, no parameters) on `db`.
Status ExecSql(sqlite3* db, const std::string& path, std::string_view sql, std::string_view what);

}  // namespace ampledger
