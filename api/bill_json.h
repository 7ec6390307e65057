// api/bill_json.h
// A billing cycle's site bill (the building's utility bill as the tariff computes it) as one
// JSON object for /v1/bills/{cycle}: what RenderStatementJson (daemon/metering/statement_render.h)
// is for one unit's statement, with the same money and date conventions. Pure; any thread.
#pragma once

#include <string>

#include "daemon/metering/statement.h"

namespace ampledger {

// {"site", "cycle": {"name": "2026-03", "first_day", "next_first_day"}, "currency",
//  "tariffs": [{"name", "title", "first_day", "last_day"}],
//  "lines": [{"kind", "description", "quantity", "unit", "unit_price", "amount"}],
//  "total", "credit_carried_out", "days", "load_kwh", "import_kwh", "export_kwh", "billed_kwh",
//  "power_factor", "coverage", "estimated_fraction",
//  "main_meter": {"kwh", "basis", "submetered_kwh", "submetered_ratio", "remainder_kwh"},
//  "notice"}
// Money is a decimal string (exact, "12.34"); unit_price is null on percentage lines, whose
// "quantity" is the percent. The tenant-billing notice is always there.
std::string RenderBillJson(const CycleStatements& cycle, const std::string& cycle_name,
                           const std::string& site_name, const std::string& currency);

// "energy", "tier", "adder", "fixed", "demand", "export_credit", "minimum", "adjustment",
// "carried_credit".
const char* LineKindName(LineKind kind);

}  // namespace ampledger
