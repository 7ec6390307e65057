// api/series_route.cpp
#include "api/series_route.h"

#include <algorithm>
#include <optional>
#include <nlohmann/json.hpp>

#include "api/api_limits.h"
#include "api/csv.h"
#include "api/energy_series.h"
#include "api/json_text.h"
#include "api/query_parameters.h"
#include "api/rfc3339.h"
#include "storage/daily_rollup.h"
#include "storage/queries.h"

namespace ampledger {
namespace {

using nlohmann::json;

struct SeriesQuery {
  UnixMs from_ms = 0;
  UnixMs to_ms = 0;
  SeriesStep step = SeriesStep::kHour;
  bool csv = false;
};

Result<SeriesQuery> ParseQuery(const HttpRequest& request, const LocalTime& zone) {
  if (Status known = CheckParameters(request, {"from", "to", "step", "format"}); !known.ok()) {
    return known;
  }
  SeriesQuery query;
  Result<UnixMs> from = ParseTimeParameter(request, "from", zone);
  if (!from.ok()) return from.status();
  Result<UnixMs> to = ParseTimeParameter(request, "to", zone);
  if (!to.ok()) return to.status();
  query.from_ms = *from;
  query.to_ms = *to;
  if (const std::string* step = request.Query("step")) {
    Result<SeriesStep> parsed = ParseSeriesStep(*step);
    if (!parsed.ok()) return parsed.status();
    query.step = *parsed;
  }
  Result<bool> csv = WantsCsv(request);
  if (!csv.ok()) return csv.status();
  query.csv = *csv;
  return query;
}

HttpResponse CsvResponse(std::string body, const LocalTime& zone) {
  HttpResponse response;
  response.content_type = kCsvContentType;
  response.body = std::move(body);
  // CSV has no place for metadata: the zone goes in a header; units are in the column names.
  response.headers.emplace_back("Ampledger-Time-Zone", zone.zone_name());
  return response;
}

// Appends the "points" array of a period series as JSON text, byte for byte what
// nlohmann::json::dump() writes for an array of objects with these members (an object's
// members in its sorted key order). Written directly because building a year of days as json
// values (a std::map per point, a heap string per key and time), dumping and freeing them was
// most of the route's CPU (perf on `query_scale`, issue 9). Times and quality names are
// written without escaping: RFC 3339 text and QualityName() hold no quote, backslash or
// control character.
void AppendPointsJson(const std::vector<SeriesPoint>& points, const LocalTime& zone,
                      std::string* text) {
  std::string& out = *text;
  out.reserve(out.size() + points.size() * 256);
  out += '[';
  // Periods are back to back (SeriesPeriods): a start is the previous end, formatted once.
  std::string start;
  std::optional<UnixMs> start_ms;  // the instant `start` holds
  for (const SeriesPoint& point : points) {
    if (&point != &points.front()) out += ',';
    if (start_ms != point.period.start_ms) start = FormatLocalRfc3339(zone, point.period.start_ms);
    std::string end = FormatLocalRfc3339(zone, point.period.end_ms);
    out += "{\"apparent_energy_vah\":";
    AppendJsonNumber(point.apparent_vah, &out);
    out += ",\"coverage\":";
    AppendJsonNumber(point.coverage, &out);
    out += ",\"end\":\"" + end + "\",\"energy_wh\":";
    AppendJsonNumber(point.real_wh, &out);
    out += ",\"max_w\":";
    AppendJsonNumberOrNull(point.has_data, point.max_watts, &out);
    out += ",\"mean_w\":";
    AppendJsonNumber(point.MeanWatts(), &out);
    out += ",\"min_w\":";
    AppendJsonNumberOrNull(point.has_data, point.min_watts, &out);
    out += ",\"quality\":";
    out += point.has_data ? "\"" + std::string(QualityName(point.quality)) + "\"" : "null";
    out += ",\"start\":\"" + start + "\"}";
    start = std::move(end);
    start_ms = point.period.end_ms;
  }
  out += ']';
}

Result<HttpResponse> PeriodSeries(const SeriesQuery& query, const Config& config,
                                  const SeriesMap& series, const LocalTime& zone,
                                  const Database& db, const SeriesSubject& subject) {
  Result<std::vector<TimeRange>> periods =
      SeriesPeriods(zone, query.step, query.from_ms, query.to_ms, kMaxSeriesPoints);
  if (!periods.ok()) return periods.status();
  // Days and months are whole local days: read from the daily rollup, a row per day rather
  // than 96 (storage/daily_rollup.h).
  const bool whole_days = query.step == SeriesStep::kDay || query.step == SeriesStep::kMonth;
  Result<std::vector<std::vector<CircuitBucket>>> buckets =
      whole_days ? ReadDaysAndBucketsForCircuits(db, series, zone, subject.circuits,
                                                 query.from_ms, query.to_ms)
                 : ReadBucketsForCircuits(db, series, subject.circuits, query.from_ms, query.to_ms);
  if (!buckets.ok()) return buckets.status();
  const std::vector<SeriesPoint> points = SumIntoPeriods(*periods, *buckets);
  double total_wh = 0;
  for (const SeriesPoint& point : points) total_wh += point.real_wh;

  if (query.csv) {
    std::string body =
        "start,end,energy_wh,apparent_energy_vah,mean_w,min_w,max_w,coverage,quality\r\n";
    for (const SeriesPoint& point : points) {
      body += FormatLocalRfc3339(zone, point.period.start_ms) + "," +
              FormatLocalRfc3339(zone, point.period.end_ms) + "," + CsvNumber(point.real_wh) + "," +
              CsvNumber(point.apparent_vah) + "," + CsvNumber(point.MeanWatts()) + "," +
              (point.has_data ? CsvNumber(point.min_watts) : "") + "," +
              (point.has_data ? CsvNumber(point.max_watts) : "") + "," + CsvNumber(point.coverage) +
              "," + (point.has_data ? QualityName(point.quality) : "") + "\r\n";
    }
    return CsvResponse(std::move(body), zone);
  }
  json circuit_ids = json::array();
  for (int circuit : subject.circuits) circuit_ids.push_back(config.circuits[circuit].id);
  // The members before "points" (in key order) and those after it are dumped apart; the
  // points' text goes between them.
  json before = {{"circuits", circuit_ids}, {"from", FormatLocalRfc3339(zone, query.from_ms)}};
  json after = {{"step", SeriesStepName(query.step)},
                {"to", FormatLocalRfc3339(zone, query.to_ms)},
                {"time_zone", zone.zone_name()},
                {"units",
                 {{"energy_wh", "Wh"}, {"apparent_energy_vah", "VAh"}, {"mean_w", "W"},
                  {"min_w", "W"}, {"max_w", "W"}, {"total_energy_kwh", "kWh"},
                  {"coverage", "fraction of the period measured, 0..1"}}},
                {"total_energy_kwh", total_wh / 1000.0}};
  (std::string(subject.kind) < "points" ? before : after)[subject.kind] = subject.id;
  std::string text = OpenObjectUpTo(before, "points");
  AppendPointsJson(points, zone, &text);
  CloseObjectAfter(after, &text);
  return HttpResponse::Json(std::move(text));
}

// "node/channel" of each flat channel index, in Config order.
std::vector<std::string> ChannelNames(const Config& config) {
  std::vector<std::string> names;
  for (const NodeConfig& node : config.nodes) {
    for (const ChannelConfig& channel : node.channels) names.push_back(node.id + "/" + channel.id);
  }
  return names;
}

Result<HttpResponse> RawSeries(const SeriesQuery& query, const Config& config,
                               const SeriesMap& series, const LocalTime& zone,
                               const Database& db, const SeriesSubject& subject) {
  if (subject.kind != std::string("circuit")) {
    return Status::InvalidArgument("query parameter \"step\": raw readings are served per "
                                   "circuit; a unit's series needs 15m, hour, day or month");
  }
  if (query.to_ms <= query.from_ms) {
    return Status::InvalidArgument("query parameter \"to\": must be later than \"from\"");
  }
  if (query.to_ms - query.from_ms > kMaxRawRangeMs) {
    return Status::InvalidArgument("query parameter \"to\": raw readings are served for at most " +
                                   std::to_string(kMaxRawRangeMs / 3600000) +
                                   " hours at a time; use a shorter range or step 15m");
  }
  // A reading is stamped at its interval's end: the readings inside (from, to] are those
  // ending in [from + 1, to + 1).
  std::vector<ChannelReading> readings;
  for (int channel : series.channels_of_circuit[subject.circuits.front()]) {
    Result<std::vector<ChannelReading>> some = ReadChannelReadings(
        db, series, channel, query.from_ms + 1, query.to_ms + 1, kMaxSeriesPoints + 1);
    if (!some.ok()) return some.status();
    readings.insert(readings.end(), some->begin(), some->end());
    if (static_cast<int>(readings.size()) > kMaxSeriesPoints) {
      return Status::InvalidArgument("query parameter \"step\": the range holds more than " +
                                     std::to_string(kMaxSeriesPoints) +
                                     " raw readings; use step 15m or a shorter range");
    }
  }
  std::sort(readings.begin(), readings.end(), [](const ChannelReading& a, const ChannelReading& b) {
    return a.end_ms != b.end_ms ? a.end_ms < b.end_ms : a.channel < b.channel;
  });
  const std::vector<std::string> names = ChannelNames(config);
  if (query.csv) {
    std::string body = "channel,end,duration_s,real_w,apparent_va,amps,volts,volts_measured,"
                       "quality\r\n";
    for (const ChannelReading& r : readings) {
      body += CsvField(names[r.channel]) + "," + FormatLocalRfc3339(zone, r.end_ms) + "," +
              CsvNumber(r.duration_ms / 1000.0) + "," + CsvNumber(r.real_watts) + "," +
              CsvNumber(r.apparent_va) + "," + CsvNumber(r.amps) + "," + CsvNumber(r.volts) + "," +
              (r.volts_measured ? "true" : "false") + "," + QualityName(r.quality) + "\r\n";
    }
    return CsvResponse(std::move(body), zone);
  }
  json out = json::array();
  for (const ChannelReading& r : readings) {
    out.push_back({{"channel", names[r.channel]},
                   {"end", FormatLocalRfc3339(zone, r.end_ms)},
                   {"duration_s", r.duration_ms / 1000.0},
                   {"real_w", r.real_watts},
                   {"apparent_va", r.apparent_va},
                   {"amps", r.amps},
                   {"volts", r.volts},
                   {"volts_measured", r.volts_measured},
                   {"quality", QualityName(r.quality)}});
  }
  json body = {{subject.kind, subject.id},
               {"step", "raw"},
               {"from", FormatLocalRfc3339(zone, query.from_ms)},
               {"to", FormatLocalRfc3339(zone, query.to_ms)},
               {"time_zone", zone.zone_name()},
               {"units",
                {{"duration_s", "s"}, {"real_w", "W"}, {"apparent_va", "VA"}, {"amps", "A"},
                 {"volts", "V"}}},
               {"points", out}};
  return HttpResponse::Json(body.dump());
}

}  // namespace

Result<HttpResponse> AnswerSeries(const HttpRequest& request, const Config& config,
                                  const SeriesMap& series, const LocalTime& zone,
                                  const Database& db, const SeriesSubject& subject) {
  Result<SeriesQuery> query = ParseQuery(request, zone);
  if (!query.ok()) return query.status();
  if (query->step == SeriesStep::kRaw) {
    return RawSeries(*query, config, series, zone, db, subject);
  }
  return PeriodSeries(*query, config, series, zone, db, subject);
}

}  // namespace ampledger
