// tests/api/token_test.cpp
#include "api/token.h"

#include <doctest/doctest.h>

#include <set>
#include <vector>

#include "storage/token_store.h"
#include "test_util.h"

namespace ampledger {
namespace {

std::string Hex(const std::string& bytes) {
  static const char* kDigits = "0123456789abcdef";
  std::string out;
  for (unsigned char c : bytes) {
    out += kDigits[c >> 4];
    out += kDigits[c & 15];
  }
  return out;
}

struct TokenFixture {
  TokenFixture() {
    options.path = dir.File("tokens.db");
    db = std::move(Database::Open(options).value());
  }
  testing::TempDir dir;
  StorageConfig options;
  std::unique_ptr<Database> db;
};

TEST_SUITE("api") {
  TEST_CASE("Sha256 matches the published test vector") {
    // FIPS 180-2, Appendix B.1: SHA-256("abc").
    CHECK(Hex(Sha256("abc")) ==
          "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  }

  TEST_CASE("ParseScope accepts admin, viewer and unit:<id> only") {
    CHECK(ParseScope("admin")->kind == Scope::Kind::kAdmin);
    CHECK(ParseScope("viewer")->kind == Scope::Kind::kViewer);
    Result<Scope> unit = ParseScope("unit:upper");
    REQUIRE(unit.ok());
    CHECK(unit->kind == Scope::Kind::kUnit);
    CHECK(unit->unit == "upper");
    CHECK(ScopeName(*unit) == "unit:upper");
    for (const char* bad : {"", "Admin", "unit:", "unit", "root", "viewer "}) {
      CAPTURE(bad);
      CHECK_FALSE(ParseScope(bad).ok());
    }
    CHECK(ParseScope("owner").status().message() ==
          "scope \"owner\" is not admin, viewer or unit:<unit id>");
  }

  TEST_CASE_FIXTURE(TokenFixture, "IssueToken stores only the hash; Authenticate checks it") {
    Result<IssuedToken> issued = IssueToken(*db, *ParseScope("unit:a"), "kitchen tablet", 42);
    REQUIRE(issued.ok());
    const std::string& token = issued->token;
    const std::string prefix = "amlt_" + std::to_string(issued->id) + "_";
    REQUIRE(token.substr(0, prefix.size()) == prefix);
    const std::string secret = token.substr(prefix.size());
    CHECK(secret.size() == 43);  // 256 bits in base64url without padding
    StoredToken stored = FindToken(*db, issued->id).value().value();
    CHECK(stored.secret_sha256 == Sha256(secret));
    CHECK(stored.secret_sha256.find(secret) == std::string::npos);
    CHECK(stored.scope == "unit:a");
    CHECK(stored.label == "kitchen tablet");

    Result<std::optional<Scope>> scope = Authenticate(*db, "Bearer " + token);
    REQUIRE(scope.ok());
    REQUIRE(scope->has_value());
    CHECK((*scope)->unit == "a");
    // RFC 6750 section 2.1 via RFC 7235: the scheme is case-insensitive.
    CHECK(Authenticate(*db, "bearer " + token)->has_value());

    std::string wrong = token;
    wrong.back() = wrong.back() == 'A' ? 'B' : 'A';
    const std::string other_id = "amlt_999_" + secret;
    for (const std::string& header : std::vector<std::string>{
             "", "Bearer", "Bearer ", token, "Basic " + token, "Bearer " + wrong,
          "Bearer " + other_id, "Bearer " + token + "x", "Bearer  " + token,
          "Bearer amlt_0_" + secret, "Bearer amlt_-1_" + secret}) {
      CAPTURE(header);
      Result<std::optional<Scope>> refused = Authenticate(*db, header);
      REQUIRE(refused.ok());
      CHECK_FALSE(refused->has_value());
    }

    REQUIRE(RevokeToken(*db, issued->id, 43).ok());
    CHECK_FALSE(Authenticate(*db, "Bearer " + token)->has_value());
  }

  TEST_CASE_FIXTURE(TokenFixture, "tokens are distinct") {
    std::set<std::string> secrets;
    for (int i = 0; i < 20; ++i) {
      Result<IssuedToken> issued = IssueToken(*db, *ParseScope("viewer"), "", i);
      REQUIRE(issued.ok());
      secrets.insert(issued->token.substr(issued->token.find('_', 5) + 1));  // after amlt_<id>_
    }
    CHECK(secrets.size() == 20);
  }
}

}  // namespace
}  // namespace ampledger
