// api/token.h
// API bearer tokens: what a token looks like, which scopes exist, how one is made and checked.
//
// A token reads "amlt_<id>_<secret>": <id> is its row in the api_token table (decimal) and
// <secret> 43 base64url characters (RFC 4648 section 5, no padding) of 256 random bits from
// OpenSSL's RAND_bytes. Only SHA-256(secret) is stored; a presented token is found by its id
// and its secret's hash compared in constant time (CRYPTO_memcmp), so neither the lookup nor
// the comparison tells a caller how close a guess was.
//
// Scopes: admin (everything), viewer (read everything), unit:<unit id> (one unit's circuits,
// their series and live values; anything else looks as if it did not exist).
// Functions are thread-safe; each Database is used by the calling thread only.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "config/status.h"
#include "daemon/metering/reading.h"
#include "storage/database.h"

namespace ampledger {

struct Scope {
  enum class Kind { kAdmin, kViewer, kUnit };
  Kind kind = Kind::kViewer;
  std::string unit;  // kUnit only

  bool SeesWholeSite() const { return kind != Kind::kUnit; }
};

// "admin", "viewer" or "unit:<id>"; InvalidArgument otherwise, quoting the text.
Result<Scope> ParseScope(std::string_view text);
std::string ScopeName(const Scope& scope);

struct IssuedToken {
  std::int64_t id = 0;
  std::string token;  // the whole bearer token; shown once, never stored
};

// Makes a token with `scope` and `label`, stores its hash on `db` (a writable connection).
Result<IssuedToken> IssueToken(const Database& db, const Scope& scope, const std::string& label,
                               UnixMs now_ms);

// The scope of the bearer token in an Authorization header value ("Bearer amlt_..."), or
// nullopt when the header is missing or malformed, or the token unknown, revoked or of a
// scope this build cannot read. A non-OK Status only when the database could not answer.
Result<std::optional<Scope>> Authenticate(const Database& db, std::string_view authorization);

// Exposed for tests: SHA-256 of `secret` as 32 raw bytes.
std::string Sha256(std::string_view secret);

}  // namespace ampledger
