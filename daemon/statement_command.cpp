// daemon/statement_command.cpp
#include "daemon/statement_command.h"

#include <ostream>

#include "config/config.h"
#include "daemon/metering/statement_render.h"
#include "daemon/metering/tariff_schedule.h"
#include "storage/cycle_query.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {
namespace {

// "2026-03" -> March 2026.
void Render(const StatementOptions& options, const Config& config, const CycleStatements& cycle,
            std::ostream& out) {
  const std::string& site = config.site.name;
  const std::string& currency = config.site.currency;
  std::vector<const UnitStatement*> chosen;
  for (const UnitStatement& statement : cycle.units) {
    if (options.unit.empty() || statement.unit_id == options.unit) chosen.push_back(&statement);
  }
  if (options.format == "html") {
    out << RenderStatementsHtml(cycle, chosen, site, currency);
  } else if (options.format == "csv") {
    out << RenderStatementCsv(*chosen.front());
  } else if (options.format == "json") {
    if (options.unit.empty()) out << "[";
    for (std::size_t k = 0; k < chosen.size(); ++k) {
      out << (k ? ", " : "") << RenderStatementJson(cycle, *chosen[k], site, currency);
    }
    out << (options.unit.empty() ? "]\n" : "\n");
  } else {
    if (options.unit.empty()) out << RenderBillText(cycle.site, site, currency) << "\n";
    for (std::size_t k = 0; k < chosen.size(); ++k) {
      out << (k ? "\n" : "") << RenderStatementText(cycle, *chosen[k], site, currency);
    }
  }
}

}  // namespace

int RunStatement(const StatementOptions& options, std::ostream& out, std::ostream& err) {
  if (options.format != "text" && options.format != "json" && options.format != "csv" &&
      options.format != "html") {
    err << "ampledger: statement: --format: expected text, json, csv or html, got \""
        << options.format << "\"\n";
    return 2;
  }
  if (options.format == "csv" && options.unit.empty()) {
    err << "ampledger: statement: --format csv needs --unit (one statement per file)\n";
    return 2;
  }
  std::optional<date::year_month> month = ParseCycleMonth(options.cycle);
  if (!month) {
    err << "ampledger: statement: --cycle: expected the month a cycle starts in, YYYY-MM (1970-01 or later), got \"" << options.cycle
        << "\"\n";
    return 2;
  }
  Result<Config> config = LoadConfig(options.config_path);
  if (!config.ok()) {
    err << "ampledger: " << config.status().message() << "\n";
    return 2;
  }
  if (!options.unit.empty() && config->FindUnit(options.unit) == nullptr) {
    err << "ampledger: statement: --unit: " << options.config_path << " has no unit \""
        << options.unit << "\"\n";
    return 2;
  }
  Result<TariffSchedule> schedule = TariffSchedule::Create(*config);
  if (!schedule.ok()) {
    err << "ampledger: " << schedule.status().message() << "\n";
    return 2;
  }
  if (schedule->empty()) {
    err << "ampledger: statement: " << options.config_path
        << " names no tariff (site.tariff); statements need one\n";
    return 2;
  }
  Result<LocalTime> local = LocalTime::ForZone(config->site.time_zone);
  if (!local.ok()) {
    err << "ampledger: " << local.status().ToString() << "\n";
    return 1;
  }
  const std::string path = options.db_path.empty() ? config->storage.path : options.db_path;
  Result<std::unique_ptr<Database>> db = Database::OpenReader(path);
  if (!db.ok()) {
    err << "ampledger: statement: " << db.status().message() << "\n";
    return 1;
  }
  Result<SeriesMap> series = LookUpSeries(**db, *config);
  if (!series.ok()) {
    err << "ampledger: statement: " << series.status().ToString() << "\n";
    return 1;
  }
  Result<CycleStatements> cycle =
      QueryCycleStatements(**db, *series, *config, *schedule, *local, *month);
  if (!cycle.ok()) {
    err << "ampledger: statement: " << cycle.status().ToString() << "\n";
    return 1;
  }
  Render(options, *config, *cycle, out);
  return 0;
}

}  // namespace ampledger
