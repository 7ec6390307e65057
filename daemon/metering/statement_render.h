// daemon/metering/statement_render.h
// A unit's statement (or the site bill) as text for people and programs: a plain-text table
// and CSV (RFC 4180: CRLF line ends, fields with a comma, quote or line break quoted, quotes
// doubled). Pure functions returning strings; the CLI and the API write them out. Any thread.
#pragma once

#include <string>

#include "daemon/metering/statement.h"

namespace ampledger {

// A fixed-width table: heading (site, unit, cycle, currency), one row per line (what,
// method, quantity, unit, unit price, amount), the total, coverage, the submetered /
// main-meter ratio when known, and the tenant-billing notice.
std::string RenderStatementText(const CycleStatements& cycle, const UnitStatement& statement,
                                const std::string& site_name, const std::string& currency);

// The site bill as the same table.
std::string RenderBillText(const Bill& bill, const std::string& site_name,
                           const std::string& currency);

// CSV with a header row: section,description,method,quantity,unit,unit_price,amount; a last
// row "total" carries the statement's total. Money as decimals ("12.34", prices exact).
std::string RenderStatementCsv(const UnitStatement& statement);

}  // namespace ampledger
