// api/energy_route.cpp
#include "api/energy_route.h"

#include <algorithm>
#include <string_view>

#include "api/access.h"
#include "api/api_limits.h"
#include "api/csv.h"
#include "api/energy_cost.h"
#include "api/json_text.h"
#include "api/query_parameters.h"
#include "api/rfc3339.h"
#include "storage/daily_rollup.h"
#include "storage/queries.h"

namespace ampledger {
namespace {

using nlohmann::json;

// The row of `circuits` (positions in `visible`) summed over `range`.
EnergyRow SumRow(const Config& config, std::string id, std::string name,
                 const std::vector<int>& positions, const std::vector<int>& visible,
                 const std::vector<CircuitTotal>& totals, const TimeRange& range) {
  EnergyRow row{std::move(id), std::move(name), {}, {}, {}, 0, false, Quality::kMeasured, {}};
  std::vector<CircuitTotal> drawn, exported;
  for (int position : positions) {
    const int circuit = visible[position];
    row.circuits.push_back(circuit);
    (config.circuits[circuit].direction == Direction::kExport ? exported : drawn)
        .push_back(totals[position]);
  }
  if (!drawn.empty()) row.consumption = SumTotals(range, drawn);
  if (!exported.empty()) row.exported = SumTotals(range, exported);
  row.consumption.period = row.exported.period = range;
  if (!row.circuits.empty()) {
    // Each side's coverage is its own circuits' average: weight them by circuit count.
    row.coverage = (row.consumption.coverage * drawn.size() +
                    row.exported.coverage * exported.size()) /
                   row.circuits.size();
  }
  row.has_data = row.consumption.has_data || row.exported.has_data;
  if (row.consumption.has_data) row.quality = Worse(row.quality, row.consumption.quality);
  if (row.exported.has_data) row.quality = Worse(row.quality, row.exported.quality);
  return row;
}

// Appends the "rows" array: what dump() writes for an object per row with a member per
// column (json_text.h says why it is not built as json values).
void AppendRowsJson(const std::vector<EnergyRow>& rows, std::vector<EnergyColumn> columns,
                    std::string* out) {
  std::sort(columns.begin(), columns.end(), [](const EnergyColumn& a, const EnergyColumn& b) {
    return std::string_view(a.name) < std::string_view(b.name);  // dump()'s member order
  });
  *out += '[';
  for (const EnergyRow& row : rows) {
    if (&row != &rows.front()) *out += ',';
    *out += '{';
    for (const EnergyColumn& column : columns) {
      if (&column != &columns.front()) *out += ',';
      AppendJsonString(column.name, out);
      *out += ':';
      *out += column.value(row).dump();
    }
    *out += '}';
  }
  *out += ']';
}

Result<EnergyGrouping> ParseGrouping(const HttpRequest& request) {
  const std::string* by = request.Query("by");
  if (by == nullptr || *by == "circuit") return EnergyGrouping::kCircuit;
  if (*by == "unit") return EnergyGrouping::kUnit;
  if (*by == "rate_period") return EnergyGrouping::kRatePeriod;
  return Status::InvalidArgument("query parameter \"by\": \"" + *by +
                                 "\" is not circuit, unit or rate_period");
}

// Both bounds on a 15-minute boundary, in order, at most kMaxEnergyRangeMs apart.
Status CheckRange(UnixMs from_ms, UnixMs to_ms) {
  for (const auto& [name, instant] : {std::pair<const char*, UnixMs>{"from", from_ms},
                                      std::pair<const char*, UnixMs>{"to", to_ms}}) {
    if (((instant % kMsPerBucket) + kMsPerBucket) % kMsPerBucket != 0) {
      return Status::InvalidArgument(std::string("query parameter \"") + name +
                                     "\": energy is kept per quarter hour, so the time must "
                                     "fall on one (minute 00, 15, 30 or 45 in UTC)");
    }
  }
  if (to_ms <= from_ms) {
    return Status::InvalidArgument("query parameter \"to\": must be later than \"from\"");
  }
  if (to_ms - from_ms > kMaxEnergyRangeMs) {
    return Status::InvalidArgument("query parameter \"to\": the range is longer than " +
                                   std::to_string(kMaxEnergyRangeMs / (86400 * kMsPerSecond)) +
                                   " days; ask for it in parts");
  }
  return Status::Ok();
}

// Each row's cost: the energy charge of its consumption circuits' buckets.
Status PriceRows(const Config& config, const TariffSchedule& schedule, const LocalTime& zone,
                 const std::vector<int>& visible,
                 const std::vector<std::vector<CircuitBucket>>& buckets,
                 std::vector<EnergyRow>& rows) {
  for (EnergyRow& row : rows) {
    std::vector<std::vector<CircuitBucket>> own;
    bool consumes = false;
    for (int circuit : row.circuits) {
      const size_t position = std::find(visible.begin(), visible.end(), circuit) - visible.begin();
      own.push_back(buckets[position]);
      consumes = consumes || config.circuits[circuit].direction != Direction::kExport;
    }
    if (!consumes) continue;
    Result<EnergyCost> cost =
        PriceBuckets(schedule, zone, ConsumptionBuckets(config, row.circuits, own));
    if (!cost.ok()) return cost.status();
    row.cost = cost->cost;
  }
  return Status::Ok();
}

// One row per rate period: the consumption circuits of `visible` priced together.
Result<std::vector<EnergyRow>> RatePeriodRows(
    const Config& config, const TariffSchedule& schedule, const LocalTime& zone,
    const std::vector<int>& visible, const std::vector<std::vector<CircuitBucket>>& buckets,
    const TimeRange& range) {
  Result<EnergyCost> cost =
      PriceBuckets(schedule, zone, ConsumptionBuckets(config, visible, buckets));
  if (!cost.ok()) return cost.status();
  std::vector<EnergyRow> rows;
  for (const PeriodCost& period : cost->periods) {
    EnergyRow row{period.period, period.period, {}, {}, {}, 0, false, Quality::kMeasured, {}};
    row.consumption.period = row.exported.period = range;
    row.consumption.real_wh = period.kwh * 1000;
    row.has_data = true;
    row.cost = period.cost;
    rows.push_back(std::move(row));
  }
  return rows;
}

json CostValue(const EnergyRow& row) { return row.cost ? json(*row.cost) : json(nullptr); }

std::string CsvValue(const json& value) {
  if (value.is_null()) return "";
  if (value.is_string()) return CsvField(value.get<std::string>());
  if (value.is_number()) return CsvNumber(value.get<double>());
  if (value.is_array()) {  // a list of ids, space-separated in one field
    std::string joined;
    for (const json& item : value) joined += (joined.empty() ? "" : " ") + item.get<std::string>();
    return CsvField(joined);
  }
  return CsvField(value.dump());
}

}  // namespace

std::vector<EnergyRow> GroupEnergy(const Config& config, const Scope& scope,
                                   EnergyGrouping grouping, const std::vector<int>& visible,
                                   const std::vector<CircuitTotal>& totals,
                                   const TimeRange& range) {
  std::vector<EnergyRow> rows;
  if (grouping == EnergyGrouping::kCircuit) {
    for (size_t position = 0; position < visible.size(); ++position) {
      const CircuitConfig& circuit = config.circuits[visible[position]];
      rows.push_back(SumRow(config, circuit.id, circuit.name, {static_cast<int>(position)},
                            visible, totals, range));
    }
    return rows;
  }
  std::vector<std::vector<int>> positions_of_unit(config.units.size());
  std::vector<int> of_no_unit;
  for (size_t position = 0; position < visible.size(); ++position) {
    const int owner = OwnerOfCircuit(config, visible[position]);
    (owner >= 0 ? positions_of_unit[owner] : of_no_unit).push_back(static_cast<int>(position));
  }
  for (size_t unit = 0; unit < config.units.size(); ++unit) {
    const UnitConfig& unit_config = config.units[unit];
    if (VisibleUnit(config, scope, unit_config.id) < 0) continue;
    rows.push_back(SumRow(config, unit_config.id, unit_config.name, positions_of_unit[unit],
                          visible, totals, range));
  }
  if (scope.SeesWholeSite() && !of_no_unit.empty()) {
    rows.push_back(SumRow(config, "", "shared circuits, and circuits of no unit", of_no_unit,
                          visible, totals, range));
  }
  return rows;
}

std::vector<EnergyColumn> EnergyColumns(const Config& config, EnergyGrouping grouping,
                                        bool priced) {
  std::vector<EnergyColumn> columns;
  if (grouping == EnergyGrouping::kRatePeriod) {
    columns.push_back({"period", "", [](const EnergyRow& row) { return json(row.id); }});
    columns.push_back({"kwh", "kWh", [](const EnergyRow& row) {
                         return json(row.consumption.real_wh / 1000.0);
                       }});
    columns.push_back({"cost", config.site.currency.c_str(), CostValue});
    return columns;
  }
  if (grouping == EnergyGrouping::kCircuit) {
    columns.push_back({"circuit", "", [](const EnergyRow& row) { return json(row.id); }});
    columns.push_back({"name", "", [](const EnergyRow& row) { return json(row.name); }});
    columns.push_back({"unit", "", [&config](const EnergyRow& row) {
                         const int owner = OwnerOfCircuit(config, row.circuits.front());
                         return owner >= 0 ? json(config.units[owner].id) : json(nullptr);
                       }});
    columns.push_back({"direction", "", [&config](const EnergyRow& row) {
                         const CircuitConfig& circuit = config.circuits[row.circuits.front()];
                         return json(DirectionName(circuit.direction));
                       }});
  } else {
    columns.push_back({"unit", "", [](const EnergyRow& row) {
                         return row.id.empty() ? json(nullptr) : json(row.id);
                       }});
    columns.push_back({"name", "", [](const EnergyRow& row) { return json(row.name); }});
    columns.push_back({"circuits", "", [&config](const EnergyRow& row) {
                         json ids = json::array();
                         for (int circuit : row.circuits) {
                           ids.push_back(config.circuits[circuit].id);
                         }
                         return ids;
                       }});
  }
  columns.push_back({"consumption_kwh", "kWh", [](const EnergyRow& row) {
                       return json(row.consumption.real_wh / 1000.0);
                     }});
  columns.push_back({"export_kwh", "kWh", [](const EnergyRow& row) {
                       return json(row.exported.real_wh / 1000.0);
                     }});
  columns.push_back({"apparent_energy_kvah", "kVAh", [](const EnergyRow& row) {
                       return json((row.consumption.apparent_vah + row.exported.apparent_vah) /
                                   1000.0);
                     }});
  columns.push_back({"coverage", "fraction of the range measured, 0..1",
                     [](const EnergyRow& row) { return json(row.coverage); }});
  columns.push_back({"quality", "", [](const EnergyRow& row) {
                       return row.has_data ? json(QualityName(row.quality)) : json(nullptr);
                     }});
  if (priced) columns.push_back({"cost", config.site.currency.c_str(), CostValue});
  return columns;
}

Result<HttpResponse> AnswerEnergy(const HttpRequest& request, const Config& config,
                                  const SeriesMap& series, const LocalTime& zone,
                                  const TariffSchedule* tariffs, const Database& db,
                                  const Scope& scope) {
  if (Status known = CheckParameters(request, {"from", "to", "by", "format"}); !known.ok()) {
    return known;
  }
  Result<UnixMs> from = ParseTimeParameter(request, "from", zone);
  if (!from.ok()) return from.status();
  Result<UnixMs> to = ParseTimeParameter(request, "to", zone);
  if (!to.ok()) return to.status();
  if (Status range = CheckRange(*from, *to); !range.ok()) return range;
  Result<EnergyGrouping> grouping = ParseGrouping(request);
  if (!grouping.ok()) return grouping.status();
  Result<bool> csv = WantsCsv(request);
  if (!csv.ok()) return csv.status();
  const TariffSchedule* schedule = tariffs != nullptr && !tariffs->empty() ? tariffs : nullptr;
  if (*grouping == EnergyGrouping::kRatePeriod && schedule == nullptr) {
    return Status::InvalidArgument("query parameter \"by\": rate_period needs a site tariff "
                                   "(site.tariff in the config), and this site has none");
  }

  const std::vector<int> visible = VisibleCircuits(config, scope);
  // A priced answer needs each 15-minute bucket (its rate period). An unpriced one needs only
  // each circuit's total: it sums whole local days from the daily rollup, which makes a year's
  // answer cheap, and keeps one circuit's rows at a time, so its memory does not grow with the
  // range (the soak's answer over its whole run, tests/reliability/REPORT.md).
  std::vector<CircuitTotal> totals(visible.size());
  std::vector<std::vector<CircuitBucket>> buckets;
  if (schedule != nullptr) {
    Result<std::vector<std::vector<CircuitBucket>>> read =
        ReadBucketsForCircuits(db, series, visible, *from, *to);
    if (!read.ok()) return read.status();
    buckets = std::move(read).value();
    for (size_t i = 0; i < buckets.size(); ++i) totals[i] = TotalOf(buckets[i]);
  } else if (Status read = VisitDaysAndBucketsForCircuits(
                 db, series, zone, visible, *from, *to,
                 [&totals](size_t i, const std::vector<CircuitBucket>& elements) {
                   totals[i] = TotalOf(elements);
                 });
             !read.ok()) {
    return read;
  }
  const TimeRange range{*from, *to};
  std::vector<EnergyRow> rows;
  if (*grouping == EnergyGrouping::kRatePeriod) {
    Result<std::vector<EnergyRow>> periods =
        RatePeriodRows(config, *schedule, zone, visible, buckets, range);
    if (!periods.ok()) return periods.status();
    rows = std::move(periods).value();
  } else {
    rows = GroupEnergy(config, scope, *grouping, visible, totals, range);
    if (schedule != nullptr) {
      if (Status priced = PriceRows(config, *schedule, zone, visible, buckets, rows);
          !priced.ok()) {
        return priced;
      }
    }
  }
  const std::vector<EnergyColumn> columns =
      EnergyColumns(config, *grouping, schedule != nullptr);
  const std::string from_text = FormatLocalRfc3339(zone, *from);
  const std::string to_text = FormatLocalRfc3339(zone, *to);

  if (*csv) {
    // CSV has no place for metadata: the range is in every row, units in the column names,
    // and the zone in a header.
    std::string body = "from,to";
    for (const EnergyColumn& column : columns) body += std::string(",") + column.name;
    body += kCsvLineEnd;
    for (const EnergyRow& row : rows) {
      body += from_text + "," + to_text;
      for (const EnergyColumn& column : columns) body += "," + CsvValue(column.value(row));
      body += kCsvLineEnd;
    }
    HttpResponse response;
    response.content_type = kCsvContentType;
    response.body = std::move(body);
    response.headers.emplace_back("Ampledger-Time-Zone", zone.zone_name());
    return response;
  }
  json units = json::object();
  for (const EnergyColumn& column : columns) {
    if (*column.unit) units[column.name] = column.unit;
  }
  double consumption_wh = 0, export_wh = 0, cost = 0;
  for (const EnergyRow& row : rows) {
    consumption_wh += row.consumption.real_wh;
    export_wh += row.exported.real_wh;
    cost += row.cost.value_or(0);
  }
  const char* by = *grouping == EnergyGrouping::kCircuit ? "circuit"
                   : *grouping == EnergyGrouping::kUnit  ? "unit"
                                                         : "rate_period";
  json total = {{"consumption_kwh", consumption_wh / 1000.0}, {"export_kwh", export_wh / 1000.0}};
  if (schedule != nullptr) total["cost"] = cost;
  // The members before "rows" (in key order) and those after it are dumped apart; the rows'
  // text goes between them.
  json before = {{"by", by}, {"from", from_text}};
  if (schedule != nullptr) before["currency"] = config.site.currency;
  json after = {
      {"time_zone", zone.zone_name()}, {"to", to_text}, {"total", total}, {"units", units}};
  std::string text = OpenObjectUpTo(before, "rows");
  AppendRowsJson(rows, columns, &text);
  CloseObjectAfter(after, &text);
  return HttpResponse::Json(std::move(text));
}

}  // namespace ampledger
