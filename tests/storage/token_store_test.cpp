// tests/storage/token_store_test.cpp
#include "storage/token_store.h"

#include <doctest/doctest.h>

#include "test_util.h"

namespace ampledger {
namespace {

TEST_SUITE("storage") {
  TEST_CASE("token store: insert, find, list and revoke keep only what was given") {
    testing::TempDir dir;
    StorageConfig options;
    options.path = dir.File("tokens.db");
    auto db = std::move(Database::Open(options).value());
    const std::string hash(32, '\x07');

    Result<std::int64_t> first = InsertToken(*db, hash, "admin", "laptop", 1000);
    REQUIRE(first.ok());
    Result<std::int64_t> second = InsertToken(*db, std::string(32, '\0'), "unit:a", "", 2000);
    REQUIRE(second.ok());
    CHECK(*second > *first);

    Result<std::optional<StoredToken>> found = FindToken(*db, *first);
    REQUIRE(found.ok());
    REQUIRE(found->has_value());
    CHECK((*found)->secret_sha256 == hash);
    CHECK((*found)->scope == "admin");
    CHECK((*found)->label == "laptop");
    CHECK((*found)->created_ms == 1000);
    CHECK_FALSE((*found)->revoked_ms.has_value());
    // A hash with a zero byte survives (stored as a BLOB, not text).
    CHECK((*FindToken(*db, *second))->secret_sha256 == std::string(32, '\0'));

    REQUIRE(RevokeToken(*db, *first, 5000).ok());
    CHECK((*FindToken(*db, *first))->revoked_ms == 5000);
    Status again = RevokeToken(*db, *first, 6000);
    CHECK(again.code() == StatusCode::kNotFound);
    CHECK(RevokeToken(*db, 999, 6000).code() == StatusCode::kNotFound);
    CHECK_FALSE(FindToken(*db, 999).value().has_value());

    Result<std::vector<StoredToken>> all = ListTokens(*db);
    REQUIRE(all.ok());
    REQUIRE(all->size() == 2);
    CHECK((*all)[0].id == *first);
    CHECK((*all)[0].revoked_ms == 5000);
    CHECK((*all)[1].scope == "unit:a");
  }

  TEST_CASE("token store: a reader connection sees tokens written on another connection") {
    testing::TempDir dir;
    StorageConfig options;
    options.path = dir.File("tokens.db");
    auto writer = std::move(Database::Open(options).value());
    auto reader = std::move(Database::OpenReader(options.path).value());
    Result<std::int64_t> id = InsertToken(*writer, std::string(32, 'x'), "viewer", "", 1);
    REQUIRE(id.ok());
    CHECK(FindToken(*reader, *id).value().has_value());
    // query_only: the reader cannot write.
    CHECK_FALSE(InsertToken(*reader, std::string(32, 'y'), "viewer", "", 1).ok());
  }
}

}  // namespace
}  // namespace ampledger
