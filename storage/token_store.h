// storage/token_store.h
// The api_token table: API bearer tokens as stored, by SHA-256 of their secret (making secrets
// and hashing them is api/token.h's job; this file only reads and writes rows). Every call is
// one prepared statement on the caller's connection, used by one thread at a time.
// Writes (Insert, Revoke) may run on a connection of their own while the daemon runs: each is
// one short BEGIN IMMEDIATE transaction that waits out the writer with the busy timeout.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "config/status.h"
#include "daemon/metering/reading.h"
#include "storage/database.h"

namespace ampledger {

struct StoredToken {
  std::int64_t id = 0;
  std::string secret_sha256;  // 32 bytes
  std::string scope;          // as api/token.h formats it
  std::string label;
  UnixMs created_ms = 0;
  std::optional<UnixMs> revoked_ms;  // set once revoked
};

// Adds a token and returns its id (ids are never reused). Fails with the database's error.
Result<std::int64_t> InsertToken(const Database& db, const std::string& secret_sha256,
                                 const std::string& scope, const std::string& label,
                                 UnixMs created_ms);

// Every token ever made, revoked ones too, by id.
Result<std::vector<StoredToken>> ListTokens(const Database& db);

// The token with `id`, or nullopt when there is none (revoked tokens are returned).
Result<std::optional<StoredToken>> FindToken(const Database& db, std::int64_t id);

// Marks token `id` revoked at `revoked_ms`. NotFound when there is no such token or it was
// already revoked.
Status RevokeToken(const Database& db, std::int64_t id, UnixMs revoked_ms);

}  // namespace ampledger
