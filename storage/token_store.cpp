// storage/token_store.cpp
#include "storage/token_store.h"

namespace ampledger {
namespace {

constexpr std::string_view kColumns = "id, secret_sha256, scope, label, created_ms, revoked_ms";

StoredToken TokenFromRow(const Statement& row) {
  StoredToken token;
  token.id = row.Int(0);
  token.secret_sha256 = row.Blob(1);
  token.scope = row.Text(2);
  token.label = row.Text(3);
  token.created_ms = row.Int(4);
  if (!row.IsNull(5)) token.revoked_ms = row.Int(5);
  return token;
}

// Runs `statement` (already bound) inside BEGIN IMMEDIATE ... COMMIT, so a write from the
// command line takes the lock up front instead of failing half-way against the writer.
Status RunImmediate(const Database& db, Statement& statement, std::string_view what) {
  if (Status s = db.Exec("BEGIN IMMEDIATE", what); !s.ok()) return s;
  Status s = statement.Run(what);
  if (s.ok()) s = db.Exec("COMMIT", what);
  if (!s.ok()) (void)db.Exec("ROLLBACK", what);
  return s;
}

}  // namespace

Result<std::int64_t> InsertToken(const Database& db, const std::string& secret_sha256,
                                 const std::string& scope, const std::string& label,
                                 UnixMs created_ms) {
  Result<Statement> insert = db.Prepare(
      "INSERT INTO api_token (secret_sha256, scope, label, created_ms) VALUES (?1, ?2, ?3, ?4)");
  if (!insert.ok()) return insert.status();
  insert->BindBlob(1, secret_sha256);
  insert->Bind(2, std::string_view(scope));
  insert->Bind(3, std::string_view(label));
  insert->Bind(4, static_cast<std::int64_t>(created_ms));
  if (Status s = RunImmediate(db, *insert, "insert api token"); !s.ok()) return s;
  return static_cast<std::int64_t>(sqlite3_last_insert_rowid(db.handle()));
}

Result<std::vector<StoredToken>> ListTokens(const Database& db) {
  Result<Statement> select =
      db.Prepare("SELECT " + std::string(kColumns) + " FROM api_token ORDER BY id");
  if (!select.ok()) return select.status();
  std::vector<StoredToken> tokens;
  for (;;) {
    Result<bool> row = select->Step("list api tokens");
    if (!row.ok()) return row.status();
    if (!row.value()) break;
    tokens.push_back(TokenFromRow(*select));
  }
  return tokens;
}

Result<std::optional<StoredToken>> FindToken(const Database& db, std::int64_t id) {
  Result<Statement> select =
      db.Prepare("SELECT " + std::string(kColumns) + " FROM api_token WHERE id = ?1");
  if (!select.ok()) return select.status();
  select->Bind(1, id);
  Result<bool> row = select->Step("find api token");
  if (!row.ok()) return row.status();
  if (!row.value()) return std::optional<StoredToken>();
  return std::optional<StoredToken>(TokenFromRow(*select));
}

Status RevokeToken(const Database& db, std::int64_t id, UnixMs revoked_ms) {
  Result<Statement> update = db.Prepare(
      "UPDATE api_token SET revoked_ms = ?2 WHERE id = ?1 AND revoked_ms IS NULL");
  if (!update.ok()) return update.status();
  update->Bind(1, id);
  update->Bind(2, static_cast<std::int64_t>(revoked_ms));
  if (Status s = RunImmediate(db, *update, "revoke api token"); !s.ok()) return s;
  if (sqlite3_changes(db.handle()) == 0) {
    return Status::NotFound("no token " + std::to_string(id) + " to revoke (unknown or "
                            "already revoked)");
  }
  return Status::Ok();
}

}  // namespace ampledger
