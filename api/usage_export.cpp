// api/usage_export.cpp
#include "api/usage_export.h"

#include "api/api_limits.h"
#include "api/energy_series.h"
#include "api/query_parameters.h"
#include "config/wall_clock.h"
#include "daemon/espi/espi_usage.h"
#include "daemon/espi/espi_writer.h"
#include "storage/queries.h"

namespace ampledger {
namespace {

// The intervals of `circuits` (positions in `buckets`) summed into `periods`.
std::vector<MeterInterval> Intervals(const std::vector<TimeRange>& periods,
                                     const std::vector<std::vector<CircuitBucket>>& buckets,
                                     const std::vector<int>& positions) {
  std::vector<std::vector<CircuitBucket>> chosen;
  for (int position : positions) chosen.push_back(buckets[position]);
  std::vector<MeterInterval> intervals;
  for (const SeriesPoint& point : SumIntoPeriods(periods, chosen)) {
    if (point.has_data) intervals.push_back({point.period, point.real_wh});
  }
  return intervals;
}

}  // namespace

Result<int> ParseUsageInterval(const std::string& text, const char* what) {
  if (text == "900") return 900;
  if (text == "3600") return 3600;
  return Status::InvalidArgument(std::string(what) + ": \"" + text +
                                 "\" is not an interval ESPI export supports (900 or 3600 seconds)");
}

Result<std::string> ExportUsageEspi(const Database& db, const SeriesMap& series,
                                    const Config& config, const LocalTime& zone,
                                    const UsageSubject& subject, const UsageExportQuery& query,
                                    UnixMs now_ms) {
  if (query.range.DurationMs() > kMaxUsageExportRangeMs) {
    return Status::InvalidArgument("the range is longer than " +
                                   std::to_string(kMaxUsageExportRangeMs / (86400 * kMsPerSecond)) +
                                   " days");
  }
  const SeriesStep step = query.interval_s == 900 ? SeriesStep::kQuarterHour : SeriesStep::kHour;
  Result<std::vector<TimeRange>> periods =
      SeriesPeriods(zone, step, query.range.start_ms, query.range.end_ms,
                    static_cast<int>(kMaxUsageExportRangeMs / (900 * kMsPerSecond)));
  if (!periods.ok()) return periods.status();
  Result<std::vector<std::vector<CircuitBucket>>> buckets = ReadBucketsForCircuits(
      db, series, subject.circuits, query.range.start_ms, query.range.end_ms);
  if (!buckets.ok()) return buckets.status();
  std::vector<int> drawn, exported;
  for (size_t i = 0; i < subject.circuits.size(); ++i) {
    const bool is_export = config.circuits[subject.circuits[i]].direction == Direction::kExport;
    (is_export ? exported : drawn).push_back(static_cast<int>(i));
  }
  const std::string point = std::string(subject.kind) + " " + subject.id;
  EspiFeed feed;
  feed.title = config.site.name + ": energy of " + point;
  if (!drawn.empty() || exported.empty()) {
    feed.series.push_back(BuildEspiSeries(
        {point, point + ": energy drawn", kEspiFlowForward, query.interval_s, query.range}, zone,
        Intervals(*periods, *buckets, drawn)));
  }
  if (!exported.empty()) {
    feed.series.push_back(BuildEspiSeries(
        {point, point + ": energy exported", kEspiFlowReverse, query.interval_s, query.range}, zone,
        Intervals(*periods, *buckets, exported)));
  }
  EspiWriteOptions options;
  options.updated_s = now_ms / kMsPerSecond;
  options.id_seed = "ampledger:" + config.site.name + "/" + point + "/" +
                    std::to_string(query.range.start_ms) + "/" +
                    std::to_string(query.range.end_ms) + "/" + std::to_string(query.interval_s);
  options.href_base = "/espi/" + std::string(subject.kind) + "/" + subject.id;
  return WriteEspiFeed(feed, options);
}

Result<HttpResponse> AnswerUsageExport(const HttpRequest& request, const Config& config,
                                       const SeriesMap& series, const LocalTime& zone,
                                       const Database& db, const UsageSubject& subject) {
  if (Status known = CheckParameters(request, {"from", "to", "interval"}); !known.ok()) {
    return known;
  }
  UsageExportQuery query;
  Result<UnixMs> from = ParseTimeParameter(request, "from", zone);
  if (!from.ok()) return from.status();
  Result<UnixMs> to = ParseTimeParameter(request, "to", zone);
  if (!to.ok()) return to.status();
  query.range = {*from, *to};
  if (const std::string* interval = request.Query("interval")) {
    Result<int> seconds = ParseUsageInterval(*interval, "query parameter \"interval\"");
    if (!seconds.ok()) return seconds.status();
    query.interval_s = *seconds;
  }
  Result<std::string> xml = ExportUsageEspi(db, series, config, zone, subject, query, WallClockMs());
  if (!xml.ok()) return xml.status();
  HttpResponse response;
  response.content_type = "application/atom+xml";
  response.body = std::move(*xml);
  response.headers.emplace_back("Ampledger-Time-Zone", zone.zone_name());
  return response;
}

}  // namespace ampledger
