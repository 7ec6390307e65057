// tests/storage/database_test.cpp
#include "storage/database.h"

#include <doctest/doctest.h>
#include <sqlite3.h>

#include "test_util.h"

namespace ampledger {
namespace {

using testing::TempDir;

StorageConfig Storage(const std::string& path) {
  StorageConfig storage;
  storage.path = path;
  return storage;
}

std::string Pragma(const Database& db, const std::string& name) {
  Result<Statement> s = db.Prepare("PRAGMA " + name);
  REQUIRE(s.ok());
  Result<bool> row = s->Step("pragma");
  REQUIRE(row.ok());
  REQUIRE(row.value());
  return s->Text(0);
}

TEST_SUITE("storage") {

TEST_CASE("migrations from an empty file reach the current schema, and reopening is a no-op") {
  TempDir dir;
  std::string path = dir.File("a.db");
  {
    Result<std::unique_ptr<Database>> db = Database::Open(Storage(path));
    REQUIRE(db.ok());
    CHECK((*db)->SchemaVersion().value() == kSchemaVersion);
    CHECK(Pragma(**db, "journal_mode") == "wal");
    CHECK(Pragma(**db, "synchronous") == "2");  // FULL, the default
    CHECK(Pragma(**db, "foreign_keys") == "1");
    CHECK(Pragma(**db, "secure_delete") == "2");  // FAST
    CHECK(Pragma(**db, "journal_size_limit") == std::to_string(16 << 20));
    for (const char* table : {"channel_series", "circuit_series", "reading", "rollup",
                              "rollup_pending", "node_state"}) {
      Result<Statement> s = (*db)->Prepare(std::string("SELECT count(*) FROM ") + table);
      CHECK_MESSAGE(s.ok(), table);
    }
  }
  Result<std::unique_ptr<Database>> again = Database::Open(Storage(path));
  REQUIRE(again.ok());
  CHECK((*again)->SchemaVersion().value() == kSchemaVersion);
}

TEST_CASE("synchronous follows the config") {
  TempDir dir;
  StorageConfig storage = Storage(dir.File("a.db"));
  storage.synchronous = SyncMode::kNormal;
  Result<std::unique_ptr<Database>> db = Database::Open(storage);
  REQUIRE(db.ok());
  CHECK(Pragma(**db, "synchronous") == "1");
}

TEST_CASE("a database from a newer ampledger is refused, by name") {
  TempDir dir;
  std::string path = dir.File("new.db");
  sqlite3* raw = nullptr;
  REQUIRE(sqlite3_open(path.c_str(), &raw) == SQLITE_OK);
  REQUIRE(sqlite3_exec(raw, "CREATE TABLE t(x); PRAGMA user_version = 7;", nullptr, nullptr,
                       nullptr) == SQLITE_OK);
  sqlite3_close(raw);
  std::string expected = path + ": schema version 7 is newer than this ampledger supports (" +
                         std::to_string(kSchemaVersion) + "); upgrade ampledger";
  Result<std::unique_ptr<Database>> db = Database::Open(Storage(path));
  REQUIRE(!db.ok());
  CHECK(db.status().message() == expected);
  Result<std::unique_ptr<Database>> reader = Database::OpenReader(path);
  REQUIRE(!reader.ok());
  CHECK(reader.status().message() == expected);
}

TEST_CASE("a file that is not a database is Corruption naming the path") {
  TempDir dir;
  std::string path = dir.File("junk.db");
  testing::WriteFile(path, std::string(4096, 'x'));
  Result<std::unique_ptr<Database>> db = Database::Open(Storage(path));
  REQUIRE(!db.ok());
  CHECK(db.status().code() == StatusCode::kCorruption);
  CHECK(db.status().message().rfind(path + ": ", 0) == 0);
}

TEST_CASE("a reader needs an existing, migrated database and cannot write") {
  TempDir dir;
  CHECK(Database::OpenReader(dir.File("missing.db")).status().code() == StatusCode::kNotFound);
  std::string path = dir.File("a.db");
  REQUIRE(Database::Open(Storage(path)).ok());
  Result<std::unique_ptr<Database>> reader = Database::OpenReader(path);
  REQUIRE(reader.ok());
  CHECK(!(*reader)->Exec("DELETE FROM reading", "write from reader").ok());
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
