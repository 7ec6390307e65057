// tests/api/reader_pool_test.cpp
// ReaderPool on a real SQLite file: connections are reused, at most max_idle are kept, a
// reused connection sees what was committed since, and one given back inside a transaction
// is rolled back first.
#include "api/reader_pool.h"

#include <doctest/doctest.h>

#include "test_util.h"

namespace ampledger {
namespace {

struct PoolFixture {
  PoolFixture() {
    StorageConfig storage;
    storage.path = dir.File("site.db");
    writer = std::move(Database::Open(storage).value());
  }

  std::int64_t TokenRows(const Database& db) {
    Result<Statement> count = db.Prepare("SELECT count(*) FROM api_token");
    REQUIRE(count.ok());
    REQUIRE(count->Step("count tokens").value());
    return count->Int(0);
  }

  testing::TempDir dir;
  std::unique_ptr<Database> writer;
};

TEST_SUITE("api") {
  TEST_CASE_FIXTURE(PoolFixture, "ReaderPool reuses a connection from one request to the next") {
    ReaderPool pool(dir.File("site.db"), 2);
    const Database* first = nullptr;
    {
      Result<ReaderPool::Lease> lease = pool.Acquire();
      REQUIRE(lease.ok());
      first = &lease->db();
      CHECK(TokenRows(lease->db()) == 0);
      CHECK(pool.idle_count() == 0);
    }
    CHECK(pool.idle_count() == 1);
    // Committed by the writer while the connection sat idle: the next request sees it.
    REQUIRE(writer
                ->Exec("INSERT INTO api_token (secret_sha256, scope, label, created_ms) "
                       "VALUES (zeroblob(32), 'viewer', 'pool test', 0)",
                       "insert a token")
                .ok());
    for (int request = 0; request < 5; ++request) {
      Result<ReaderPool::Lease> lease = pool.Acquire();
      REQUIRE(lease.ok());
      CHECK(&lease->db() == first);
      CHECK(TokenRows(lease->db()) == 1);
    }
    CHECK(pool.opened_count() == 1);
  }

  TEST_CASE_FIXTURE(PoolFixture, "ReaderPool opens one per concurrent lease and keeps max_idle") {
    ReaderPool pool(dir.File("site.db"), 2);
    {
      std::vector<ReaderPool::Lease> leases;
      for (int i = 0; i < 4; ++i) {
        Result<ReaderPool::Lease> lease = pool.Acquire();
        REQUIRE(lease.ok());
        leases.push_back(std::move(lease.value()));
      }
      CHECK(&leases[0].db() != &leases[3].db());
      CHECK(pool.opened_count() == 4);
    }
    CHECK(pool.idle_count() == 2);  // two closed
    Result<ReaderPool::Lease> again = pool.Acquire();
    REQUIRE(again.ok());
    CHECK(pool.opened_count() == 4);
  }

  TEST_CASE_FIXTURE(PoolFixture, "ReaderPool rolls back a transaction left open by a request") {
    ReaderPool pool(dir.File("site.db"), 1);
    {
      Result<ReaderPool::Lease> lease = pool.Acquire();
      REQUIRE(lease.ok());
      REQUIRE(lease->db().Exec("BEGIN", "begin").ok());
      CHECK(TokenRows(lease->db()) == 0);  // the read snapshot starts here
    }
    REQUIRE(writer
                ->Exec("INSERT INTO api_token (secret_sha256, scope, label, created_ms) "
                       "VALUES (zeroblob(32), 'viewer', 'pool test', 0)",
                       "insert a token")
                .ok());
    Result<ReaderPool::Lease> lease = pool.Acquire();
    REQUIRE(lease.ok());
    CHECK(pool.opened_count() == 1);
    CHECK(sqlite3_get_autocommit(lease->db().handle()) != 0);
    CHECK(TokenRows(lease->db()) == 1);  // not the old snapshot
  }

  TEST_CASE("ReaderPool: a missing database is NotFound, and nothing is kept") {
    testing::TempDir dir;
    ReaderPool pool(dir.File("absent.db"), 2);
    Result<ReaderPool::Lease> lease = pool.Acquire();
    REQUIRE_FALSE(lease.ok());
    CHECK(lease.status().ToString().find("absent.db: no such database") != std::string::npos);
    CHECK(pool.opened_count() == 0);
    CHECK(pool.idle_count() == 0);
  }
}

}  // namespace
}  // namespace ampledger
