// daemon/metering/statement_render.h
// A unit's statement (or the site bill) as text for people and programs: a plain-text table,
// CSV (RFC 4180: CRLF line ends, fields with a comma, quote or line break quoted, quotes
// doubled), JSON (RFC 8259) and a printable HTML page. Every statement carries the
// tenant-billing notice. Pure functions returning strings; the CLI and the API write them out.
// Any thread.
#pragma once

#include <string>
#include <vector>

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

// CSV with a header row: section,description,method,quantity,unit,unit_price,amount; a row
// "total" carries the statement's total and a last row "notice" the tenant-billing notice in
// its description. Money as decimals ("12.34", prices exact).
std::string RenderStatementCsv(const UnitStatement& statement);

// One JSON object (UTF-8, no trailing newline):
//   {"site": "...", "unit": {"id": "upper", "name": "Upper flat"},
//    "cycle": {"first_day": "2026-03-05", "next_first_day": "2026-04-05"}, "currency": "USD",
//    "tariffs": [{"name", "title", "first_day", "last_day"}],
//    "lines": [{"section": "own"|"shared"|"remainder"|"common", "description", "method",
//               "quantity": 12.5, "unit": "kWh", "unit_price": "0.214" or null, "amount": "2.68"}],
//    "total": "12.76", "own_kwh": 80.1, "shared_kwh": 21.7,
//    "site_bill": {"total": "20.00", "coverage": 0.998, "estimated_fraction": 0.01},
//    "main_meter": {"kwh": 1000 or null, "basis": "...", "submetered_kwh": 950,
//                   "submetered_ratio": 0.95 or null, "remainder_kwh": 50},
//    "notice": "Billing tenants for energy is regulated ..."}
// Money is a decimal string (exact); the unit id is "" for the circuits of no unit.
std::string RenderStatementJson(const CycleStatements& cycle, const UnitStatement& statement,
                                const std::string& site_name, const std::string& currency);

// A self-contained, printable HTML page (no scripts, no outside files) of the given
// statements, one section each, each starting on a new printed page, with the notice on
// every section. Every text from the config or the tariff is HTML-escaped.
std::string RenderStatementsHtml(const CycleStatements& cycle,
                                 const std::vector<const UnitStatement*>& statements,
                                 const std::string& site_name, const std::string& currency);

}  // namespace ampledger
