// daemon/token_command.cpp
#include "daemon/token_command.h"

#include <chrono>
#include <ctime>
#include <ostream>

#include "api/token.h"
#include "config/config.h"
#include "daemon/site_database.h"
#include "storage/database.h"
#include "storage/token_store.h"

namespace ampledger {
namespace {

// Longest label kept: a note, not a document.
constexpr std::size_t kMaxLabelBytes = 200;

UnixMs NowMs() {
  return std::chrono::duration_cast<std::chrono::milliseconds>(
             std::chrono::system_clock::now().time_since_epoch())
      .count();
}

// "2026-03-08T14:05:00Z" for `token list`.
std::string UtcText(UnixMs instant) {
  std::time_t seconds = static_cast<std::time_t>(instant / 1000);
  std::tm parts{};
  gmtime_r(&seconds, &parts);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &parts);
  return text;
}

}  // namespace

int RunTokenCreate(const TokenOptions& options, std::ostream& out, std::ostream& err) {
  Result<Scope> scope = ParseScope(options.scope);
  if (!scope.ok()) {
    err << "ampledger: --scope: " << scope.status().message() << "\n";
    return 2;
  }
  if (options.label.size() > kMaxLabelBytes ||
      options.label.find_first_of("\r\n") != std::string::npos) {
    err << "ampledger: --label: at most " << kMaxLabelBytes << " bytes on one line\n";
    return 2;
  }
  Config config;
  std::unique_ptr<Database> db;
  if (int code = OpenSiteDatabase(options.config_path, &config, &db, err); code != 0) return code;
  if (scope->kind == Scope::Kind::kUnit) {
    bool known = false;
    for (const UnitConfig& unit : config.units) known = known || unit.id == scope->unit;
    if (!known) {
      err << "ampledger: --scope: " << options.config_path << " has no unit \"" << scope->unit
          << "\"\n";
      return 2;
    }
  }
  Result<IssuedToken> issued = IssueToken(*db, *scope, options.label, NowMs());
  if (!issued.ok()) {
    err << "ampledger: cannot create the token: " << issued.status().ToString() << "\n";
    return 1;
  }
  out << issued->token << "\n";
  err << "token " << issued->id << " (" << ScopeName(*scope)
      << "): shown once; only its hash is stored. Send it as \"Authorization: Bearer <token>\".\n";
  return 0;
}

int RunTokenList(const TokenOptions& options, std::ostream& out, std::ostream& err) {
  Config config;
  std::unique_ptr<Database> db;
  if (int code = OpenSiteDatabase(options.config_path, &config, &db, err); code != 0) return code;
  Result<std::vector<StoredToken>> tokens = ListTokens(*db);
  if (!tokens.ok()) {
    err << "ampledger: " << tokens.status().ToString() << "\n";
    return 1;
  }
  out << "id\tscope\tcreated\trevoked\tlabel\n";
  for (const StoredToken& token : *tokens) {
    out << token.id << "\t" << token.scope << "\t" << UtcText(token.created_ms) << "\t"
        << (token.revoked_ms ? UtcText(*token.revoked_ms) : "-") << "\t" << token.label << "\n";
  }
  return 0;
}

int RunTokenRevoke(const TokenOptions& options, std::ostream& out, std::ostream& err) {
  Config config;
  std::unique_ptr<Database> db;
  if (int code = OpenSiteDatabase(options.config_path, &config, &db, err); code != 0) return code;
  Status revoked = RevokeToken(*db, options.id, NowMs());
  if (revoked.code() == StatusCode::kNotFound) {
    err << "ampledger: " << revoked.message() << "\n";
    return 2;
  }
  if (!revoked.ok()) {
    err << "ampledger: " << revoked.ToString() << "\n";
    return 1;
  }
  out << "token " << options.id << " revoked\n";
  return 0;
}

}  // namespace ampledger
