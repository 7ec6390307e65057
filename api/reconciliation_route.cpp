// api/reconciliation_route.cpp
#include "api/reconciliation_route.h"

#include <nlohmann/json.hpp>

#include "api/api_limits.h"
#include "api/energy_series.h"
#include "api/query_parameters.h"
#include "api/rfc3339.h"
#include "daemon/metering/reconciliation.h"
#include "storage/main_meter_intervals.h"
#include "storage/main_meter_store.h"
#include "storage/queries.h"

namespace ampledger {
namespace {

using nlohmann::json;

// The billing cycles that tile [from_ms, to_ms); InvalidArgument naming the parameter that is
// not a cycle boundary.
Result<std::vector<TimeRange>> Cycles(const LocalTime& zone, int cycle_day, UnixMs from_ms,
                                      UnixMs to_ms) {
  std::vector<TimeRange> cycles;
  UnixMs at = from_ms;
  while (at < to_ms) {
    Result<BillingCycle> cycle = zone.CycleContaining(cycle_day, at);
    if (!cycle.ok()) return cycle.status();
    if (cycle->range.start_ms != at) {
      return Status::InvalidArgument(std::string("query parameter \"from\": not the start of a "
                                                 "billing cycle (cycles start on day ") +
                                     std::to_string(cycle_day) + " of the month)");
    }
    cycles.push_back(cycle->range);
    at = cycle->range.end_ms;
  }
  if (at != to_ms) {
    return Status::InvalidArgument("query parameter \"to\": not the end of a billing cycle");
  }
  return cycles;
}

json Optional(const std::optional<double>& value) { return value ? json(*value) : json(nullptr); }

}  // namespace

Result<HttpResponse> AnswerReconciliation(const HttpRequest& request, const Config& config,
                                          const SeriesMap& series, const LocalTime& zone,
                                          const Database& db) {
  if (Status known = CheckParameters(request, {"from", "to", "per"}); !known.ok()) return known;
  Result<UnixMs> from = ParseTimeParameter(request, "from", zone);
  if (!from.ok()) return from.status();
  Result<UnixMs> to = ParseTimeParameter(request, "to", zone);
  if (!to.ok()) return to.status();
  const std::string* per = request.Query("per");
  const bool per_cycle = per != nullptr && *per == "cycle";
  if (per != nullptr && !per_cycle && *per != "day") {
    return Status::InvalidArgument("query parameter \"per\": \"" + *per +
                                   "\" is not day or cycle");
  }
  if (*to <= *from) {
    return Status::InvalidArgument("query parameter \"to\": must be later than \"from\"");
  }
  if (*to - *from > kMaxEnergyRangeMs) {
    return Status::InvalidArgument("query parameter \"to\": the range is longer than " +
                                   std::to_string(kMaxEnergyRangeMs / (86400 * kMsPerSecond)) +
                                   " days");
  }
  Result<std::vector<TimeRange>> periods =
      per_cycle ? Cycles(zone, config.site.billing_cycle_day, *from, *to)
                : SeriesPeriods(zone, SeriesStep::kDay, *from, *to, kMaxSeriesPoints);
  if (!periods.ok()) return periods.status();

  std::vector<int> all;
  for (int k = 0; k < series.CircuitCount(); ++k) all.push_back(k);
  Result<std::vector<std::vector<CircuitBucket>>> buckets =
      ReadBucketsForCircuits(db, series, all, *from, *to);
  if (!buckets.ok()) return buckets.status();
  std::vector<std::vector<CircuitBucket>> drawn, exported;
  for (int k : all) {
    (config.circuits[k].direction == Direction::kExport ? exported : drawn)
        .push_back(std::move((*buckets)[k]));
  }
  Result<std::vector<MainMeterRead>> reads = ListMainMeterReads(db);
  if (!reads.ok()) return reads.status();
  Result<std::vector<MeterInterval>> intervals = ReadMainMeterIntervals(db, {*from, *to});
  if (!intervals.ok()) return intervals.status();

  json rows = json::array();
  for (const ReconciliationRow& row : Reconcile(*periods, drawn, exported, *intervals, *reads)) {
    rows.push_back({{"from", FormatLocalRfc3339(zone, row.period.start_ms)},
                    {"to", FormatLocalRfc3339(zone, row.period.end_ms)},
                    {"main_meter_kwh", Optional(row.main_meter_kwh)},
                    {"main_meter_basis", row.main_meter_basis},
                    {"submetered_kwh", row.submetered_kwh},
                    {"exported_kwh", row.exported_kwh},
                    {"coverage", row.coverage},
                    {"remainder_kwh", Optional(row.remainder_kwh)},
                    {"calibration_ratio", Optional(row.ratio)}});
  }
  return HttpResponse::Json(json{{"per", per_cycle ? "cycle" : "day"},
                                 {"time_zone", zone.zone_name()},
                                 {"units",
                                  {{"main_meter_kwh", "kWh"}, {"submetered_kwh", "kWh"},
                                   {"exported_kwh", "kWh"}, {"remainder_kwh", "kWh"},
                                   {"coverage", "1"}, {"calibration_ratio", "1"}}},
                                 {"periods", rows}}
                                .dump());
}

}  // namespace ampledger
