// storage/statement.cpp
#include "storage/statement.h"

#include <utility>

namespace ampledger {

Status SqliteStatus(sqlite3* db, int rc, const std::string& path, std::string_view what) {
  std::string message = path + ": " + std::string(what) + ": " +
                        (db != nullptr ? sqlite3_errmsg(db) : sqlite3_errstr(rc));
  switch (rc & 0xff) {
    case SQLITE_CORRUPT:
    case SQLITE_NOTADB:
      return Status::Corruption(std::move(message));
    case SQLITE_BUSY:
    case SQLITE_LOCKED:
    case SQLITE_FULL:  // the disk (or max_page_count) is full: may succeed once space returns
      return Status::Unavailable(std::move(message));
    default:
      return Status::IOError(std::move(message));
  }
}

Statement::~Statement() { Release(); }

Statement::Statement(Statement&& other) noexcept
    : db_(other.db_),
      stmt_(std::exchange(other.stmt_, nullptr)),
      path_(other.path_),
      cache_(other.cache_) {}

Statement& Statement::operator=(Statement&& other) noexcept {
  if (this != &other) {
    Release();
    db_ = other.db_;
    stmt_ = std::exchange(other.stmt_, nullptr);
    path_ = other.path_;
    cache_ = other.cache_;
  }
  return *this;
}

void Statement::Release() {
  if (cache_ != nullptr) {
    cache_->Park(std::exchange(stmt_, nullptr));
  } else {
    sqlite3_finalize(std::exchange(stmt_, nullptr));
  }
}

Result<Statement> Statement::Prepare(sqlite3* db, const std::string& path, std::string_view sql,
                                     StatementCache* cache) {
  if (cache != nullptr) {
    if (sqlite3_stmt* parked = cache->Take(sql)) return Statement(db, parked, &path, cache);
  }
  sqlite3_stmt* stmt = nullptr;
  int rc = sqlite3_prepare_v3(db, sql.data(), static_cast<int>(sql.size()),
                              SQLITE_PREPARE_PERSISTENT, &stmt, nullptr);
  if (rc != SQLITE_OK) {
    sqlite3_finalize(stmt);
    return SqliteStatus(db, rc, path, "prepare \"" + std::string(sql.substr(0, 60)) + "\"");
  }
  // Only a statement whose text is all of `sql` can be found again by it (text after the
  // first statement is not compiled, and sqlite3_sql leaves it out).
  if (cache != nullptr && std::string_view(sqlite3_sql(stmt)) != sql) cache = nullptr;
  return Statement(db, stmt, &path, cache);
}

void Statement::Bind(int index, std::int64_t value) { sqlite3_bind_int64(stmt_, index, value); }
void Statement::Bind(int index, double value) { sqlite3_bind_double(stmt_, index, value); }
void Statement::BindNull(int index) { sqlite3_bind_null(stmt_, index); }
void Statement::Bind(int index, std::string_view text) {
  sqlite3_bind_text(stmt_, index, text.data(), static_cast<int>(text.size()), SQLITE_TRANSIENT);
}
void Statement::BindBlob(int index, std::string_view bytes) {
  sqlite3_bind_blob(stmt_, index, bytes.data(), static_cast<int>(bytes.size()), SQLITE_TRANSIENT);
}
void Statement::Bind(int index, const std::optional<double>& value) {
  if (value) {
    sqlite3_bind_double(stmt_, index, *value);
  } else {
    sqlite3_bind_null(stmt_, index);
  }
}

Result<bool> Statement::Step(std::string_view what) {
  int rc = sqlite3_step(stmt_);
  if (rc == SQLITE_ROW) return true;
  if (rc == SQLITE_DONE) return false;
  return SqliteStatus(db_, rc, *path_, what);
}

Status Statement::Run(std::string_view what) {
  for (;;) {
    Result<bool> row = Step(what);
    if (!row.ok() || !row.value()) {
      Reset();
      return row.status();
    }
  }
}

void Statement::Reset() {
  sqlite3_reset(stmt_);
  sqlite3_clear_bindings(stmt_);
}

std::int64_t Statement::Int(int column) const { return sqlite3_column_int64(stmt_, column); }
double Statement::Double(int column) const { return sqlite3_column_double(stmt_, column); }
std::optional<double> Statement::OptionalDouble(int column) const {
  if (IsNull(column)) return std::nullopt;
  return Double(column);
}
std::string Statement::Text(int column) const {
  const unsigned char* text = sqlite3_column_text(stmt_, column);
  return text != nullptr ? std::string(reinterpret_cast<const char*>(text),
                                       static_cast<size_t>(sqlite3_column_bytes(stmt_, column)))
                         : std::string();
}
std::string Statement::Blob(int column) const {
  const void* bytes = sqlite3_column_blob(stmt_, column);
  return bytes != nullptr ? std::string(static_cast<const char*>(bytes),
                                        static_cast<size_t>(sqlite3_column_bytes(stmt_, column)))
                          : std::string();
}
bool Statement::IsNull(int column) const {
  return sqlite3_column_type(stmt_, column) == SQLITE_NULL;
}

Status ExecSql(sqlite3* db, const std::string& path, std::string_view sql, std::string_view what) {
  char* error = nullptr;
  int rc = sqlite3_exec(db, std::string(sql).c_str(), nullptr, nullptr, &error);
  sqlite3_free(error);
  return rc == SQLITE_OK ? Status() : SqliteStatus(db, rc, path, what);
}

}  // namespace ampledger
