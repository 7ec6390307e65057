// daemon/token_command.h
// `ampledger token create|list|revoke`: API bearer tokens (api/token.h), written through the
// command's own connection to the site's database, which the daemon may be using meanwhile
// (WAL; each write is one short BEGIN IMMEDIATE that waits out the writer). Main thread only.
#pragma once

#include <cstdint>
#include <iosfwd>
#include <string>

namespace ampledger {

struct TokenOptions {
  std::string config_path;  // the site's config: its storage.path and unit ids
  std::string scope;        // create: admin, viewer or unit:<unit id of the config>
  std::string label;        // create: a note for `token list` (who or what holds it)
  std::int64_t id = 0;      // revoke
};

// Each returns the exit code: 0, 2 for bad options or config, 1 when the database fails.
// create prints the token once (it is not stored and cannot be shown again);
// list prints id, scope, label, created and revoked times, never a token.
int RunTokenCreate(const TokenOptions& options, std::ostream& out, std::ostream& err);
int RunTokenList(const TokenOptions& options, std::ostream& out, std::ostream& err);
int RunTokenRevoke(const TokenOptions& options, std::ostream& out, std::ostream& err);

}  // namespace ampledger
