// api/energy_route.h
// GET /v1/energy: the energy of each circuit, or of each unit, over one range, as JSON
// (default) or CSV (RFC 4180; format=csv or Accept: text/csv). Query: from, to (RFC 3339 with
// offset, or local dates of the site; both on a 15-minute boundary, at most
// kMaxEnergyRangeMs apart), by (circuit, the default, unit, or rate_period), format (json, csv).
//
// Cost, when the site has a tariff: each row's "cost" is the time-of-use energy charge of its
// consumption (api/energy_cost.h: every quarter hour priced at its rate period's price under
// the tariff in force on its local date), in the tariff's currency, not rounded. Energy
// charges only: per-kWh adders, tiers, fixed and demand charges, export credits and
// adjustments (taxes) belong to the bill, so the rows do not add up to a statement. A row of
// export circuits alone has no cost (null). by=rate_period (a tariff is required) answers one
// row per rate period (period, kwh, cost) over the consumption circuits the scope sees.
//
// A unit's row sums the circuits it owns alone. Shared circuits and circuits of no unit form
// one more row (unit null) for whole-site scopes: they are split among units only on billing
// statements, by the shares the config names. A unit token sees its own unit and circuits.
//
// Every row is rendered from one list of columns (EnergyColumns), so a priced column (cost by
// rate period) joins as one more entry there. Runs on the HTTP worker threads; `db` is the
// request's own reader connection.
#pragma once

#include <functional>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "api/energy_series.h"
#include "api/http_server.h"
#include "api/token.h"
#include "config/config.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/tariff_schedule.h"
#include "storage/database.h"
#include "storage/series.h"

namespace ampledger {

enum class EnergyGrouping { kCircuit, kUnit, kRatePeriod };

// One row of the answer: one circuit, one unit's own circuits, or the circuits of no unit.
struct EnergyRow {
  std::string id;    // circuit or unit id; "" for the circuits of no unit
  std::string name;
  std::vector<int> circuits;  // indexes into Config::circuits
  // Sums over the range: consumption circuits' energy and export circuits' energy apart,
  // because adding energy drawn to energy exported would mean nothing. Without power bounds
  // (SumTotals).
  SeriesPoint consumption;
  SeriesPoint exported;
  double coverage = 0;  // measured fraction of the range, averaged over the row's circuits
  bool has_data = false;
  Quality quality = Quality::kMeasured;  // the worst of the buckets with data
  // The energy charge of `consumption`; nullopt without a tariff or consumption circuits.
  std::optional<double> cost;
};

// The rows of `grouping` for the circuits and units `scope` may see, summed from each
// circuit's total over `range` (`totals` parallel to `visible`).
std::vector<EnergyRow> GroupEnergy(const Config& config, const Scope& scope,
                                   EnergyGrouping grouping, const std::vector<int>& visible,
                                   const std::vector<CircuitTotal>& totals,
                                   const TimeRange& range);

// One column of the answer: its name in JSON and in the CSV header, its unit (or "" when it
// has none), and its value for a row (null for "no value").
struct EnergyColumn {
  const char* name;
  const char* unit;
  std::function<nlohmann::json(const EnergyRow&)> value;
};
// `priced`: the site has a tariff, so rows carry a cost column.
std::vector<EnergyColumn> EnergyColumns(const Config& config, EnergyGrouping grouping,
                                        bool priced = false);

// `tariffs`: the site's schedule; nullptr or empty when it has no tariff.
Result<HttpResponse> AnswerEnergy(const HttpRequest& request, const Config& config,
                                  const SeriesMap& series, const LocalTime& zone,
                                  const TariffSchedule* tariffs, const Database& db,
                                  const Scope& scope);

}  // namespace ampledger
