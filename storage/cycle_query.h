// storage/cycle_query.h
// A billing cycle's site bill and unit statements from what is stored: every circuit's
// 15-minute buckets in the cycle and the main-meter reads and interval reads, priced under the tariff schedule
// (daemon/metering/cycle_statements.h). What the `statement` command runs, and what an HTTP
// statement or cost route should run on its reader connection. Same threading as the
// connection: one thread at a time per Database.
#pragma once

#include "config/config.h"
#include "daemon/metering/cycle_statements.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {

// The cycle that starts on the site's billing_cycle_day of `month`, computed from `db` (a
// reader connection is enough; the buckets and reads are read in one transaction).
// Previous cycles are not consulted: demand ratchets, banked kWh and carried credit start at 0.
// InvalidArgument when the site has no tariff; database errors as they come.
Result<CycleStatements> QueryCycleStatements(const Database& db, const SeriesMap& series,
                                             const Config& config, const TariffSchedule& schedule,
                                             const LocalTime& local, date::year_month month);

}  // namespace ampledger
