// daemon/statement_command.h
// `ampledger statement`: one billing cycle's statement for a unit, or for every unit after the
// site bill, computed from the site's database (rollups and main-meter reads) under the site's
// tariff schedule, as plain text, JSON, CSV (RFC 4180) or a printable HTML page. Opens the
// database read-only, so it may run while the daemon runs. Main thread only.
#pragma once

#include <iosfwd>
#include <string>

namespace ampledger {

struct StatementOptions {
  std::string config_path;
  std::string unit;           // a unit id; "" = the site bill and every statement
  std::string cycle;          // "YYYY-MM": the cycle that starts in that month
  std::string format = "text";  // text | json | csv | html
  std::string db_path;        // "" = the config's storage.path
};

// Returns the exit code: 0; 2 for bad options or config (unknown unit, no tariff, CSV without
// a unit); 1 when the database cannot be read. Without --unit: text prints the site bill and
// then each statement; json prints an array of statement objects; html one page with a
// section per statement.
int RunStatement(const StatementOptions& options, std::ostream& out, std::ostream& err);

}  // namespace ampledger
