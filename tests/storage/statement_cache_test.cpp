// tests/storage/statement_cache_test.cpp
#include "storage/statement_cache.h"

#include <doctest/doctest.h>
#include <sqlite3.h>

#include "storage/database.h"
#include "test_util.h"

namespace ampledger {
namespace {

using testing::TempDir;

// A bare connection to a new database file, for the cache on its own.
struct Connection {
  explicit Connection(const std::string& path) {
    REQUIRE(sqlite3_open(path.c_str(), &db) == SQLITE_OK);
  }
  ~Connection() { CHECK(sqlite3_close(db) == SQLITE_OK); }  // BUSY if a statement leaked
  sqlite3_stmt* Prepare(const char* sql) const {
    sqlite3_stmt* stmt = nullptr;
    REQUIRE(sqlite3_prepare_v2(db, sql, -1, &stmt, nullptr) == SQLITE_OK);
    return stmt;
  }
  sqlite3* db = nullptr;
};

// A new database at `path`, opened for writing, with a table t (a INTEGER) of our own.
std::unique_ptr<Database> WriterWithTable(const std::string& path) {
  StorageConfig storage;
  storage.path = path;
  Result<std::unique_ptr<Database>> db = Database::Open(storage);
  REQUIRE(db.ok());
  REQUIRE((*db)->Exec("CREATE TABLE t (a INTEGER)", "create").ok());
  return std::move(db).value();
}

std::int64_t Count(const Database& db) {
  Result<Statement> count = db.Prepare("SELECT count(*) FROM t");
  REQUIRE(count.ok());
  REQUIRE(count->Step("count").value());
  return count->Int(0);
}

TEST_SUITE("storage") {

TEST_CASE("statement cache: a parked statement comes back once, reset, its bindings cleared") {
  TempDir dir;
  Connection connection(dir.File("a.db"));
  StatementCache cache(8);
  CHECK(cache.Take("SELECT ?1") == nullptr);
  sqlite3_stmt* stmt = connection.Prepare("SELECT ?1");
  sqlite3_bind_int(stmt, 1, 42);
  REQUIRE(sqlite3_step(stmt) == SQLITE_ROW);  // parked in the middle of its rows
  cache.Park(stmt);
  CHECK(cache.parked_count() == 1);
  CHECK(cache.Take("SELECT ?2") == nullptr);  // only the exact text finds it
  sqlite3_stmt* again = cache.Take("SELECT ?1");
  CHECK(again == stmt);
  CHECK(cache.Take("SELECT ?1") == nullptr);  // handed out: not parked twice
  REQUIRE(sqlite3_step(again) == SQLITE_ROW);
  CHECK(sqlite3_column_type(again, 0) == SQLITE_NULL);  // the 42 was cleared
  cache.Park(again);
  cache.Clear();
  CHECK(cache.parked_count() == 0);
}

TEST_CASE("statement cache: a second copy of one text and texts beyond the capacity finalize") {
  TempDir dir;
  Connection connection(dir.File("a.db"));
  StatementCache cache(2);
  sqlite3_stmt* first = connection.Prepare("SELECT 1");
  sqlite3_stmt* second = connection.Prepare("SELECT 1");
  cache.Park(first);
  cache.Park(second);  // its slot is full: finalized
  CHECK(cache.parked_count() == 1);
  cache.Park(connection.Prepare("SELECT 2"));
  cache.Park(connection.Prepare("SELECT 3"));  // a third text: no slot
  CHECK(cache.parked_count() == 2);
  CHECK(cache.Take("SELECT 3") == nullptr);
  cache.Park(nullptr);
  // ~StatementCache finalizes the two parked; ~Connection checks none is left open.
}

TEST_CASE("statement cache: a reused reader statement sees the writer's later commits") {
  TempDir dir;
  std::unique_ptr<Database> writer = WriterWithTable(dir.File("a.db"));
  Result<std::unique_ptr<Database>> reader = Database::OpenReader(dir.File("a.db"));
  REQUIRE(reader.ok());
  CHECK(Count(**reader) == 0);
  REQUIRE(writer->Exec("INSERT INTO t VALUES (1)", "insert").ok());
  // The parked statement was reset, so it reads a new snapshot rather than the old one.
  CHECK(Count(**reader) == 1);
}

TEST_CASE("statement cache: a parked statement follows a schema change") {
  TempDir dir;
  std::unique_ptr<Database> db = WriterWithTable(dir.File("a.db"));
  REQUIRE(db->Exec("INSERT INTO t VALUES (1)", "insert").ok());
  auto second_column = [&] {
    Result<Statement> select = db->Prepare("SELECT * FROM t");
    REQUIRE(select.ok());
    REQUIRE(select->Step("select").value());
    return select->Text(1);
  };
  CHECK(second_column() == "");  // no such column yet: SQLite answers NULL
  REQUIRE(db->Exec("ALTER TABLE t ADD COLUMN b TEXT DEFAULT 'added'", "alter").ok());
  // sqlite3_prepare_v3 statements recompile after a schema change (sqlite.org/c3ref/prepare.html).
  CHECK(second_column() == "added");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
