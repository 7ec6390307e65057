// api/main_meter_routes.cpp
#include "api/main_meter_routes.h"

#include <charconv>
#include <cmath>
#include <memory>
#include <optional>

#include <nlohmann/json.hpp>

#include "api/api_limits.h"
#include "api/problem.h"
#include "api/query_parameters.h"
#include "api/rfc3339.h"
#include "api/route_zone.h"
#include "api/site_time_text.h"
#include "config/wall_clock.h"
#include "storage/main_meter_store.h"

namespace ampledger {
namespace {

using nlohmann::json;

json ReadJson(const LocalTime& zone, const MainMeterRead& read) {
  const bool period = read.kind == MeterReadKind::kPeriod;
  return {{"id", read.id},
          {"kind", MeterReadKindName(read.kind)},
          {"from", period ? json(FormatLocalRfc3339(zone, read.period_start_ms)) : json(nullptr)},
          {"at", FormatLocalRfc3339(zone, read.at_ms)},
          {"kwh", read.kwh},
          {"source", read.source}};
}

// What a viewer token is told when it tries to change the reads.
HttpResponse Forbidden() {
  HttpResponse response;
  response.status = 403;
  response.content_type = kProblemContentType;
  response.body = ProblemJson(
      ProblemWithStatus(403, "a viewer token may list main-meter reads but not add or remove "
                             "them; use an admin token"));
  return response;
}

Result<HttpResponse> ListReads(const LocalTime& zone, const HttpRequest& request,
                               const Database& db) {
  if (Status known = CheckParameters(request, {"from", "to"}); !known.ok()) return known;
  Result<UnixMs> from = ParseTimeParameter(request, "from", zone);
  if (!from.ok()) return from.status();
  Result<UnixMs> to = ParseTimeParameter(request, "to", zone);
  if (!to.ok()) return to.status();
  if (*to <= *from) {
    return Status::InvalidArgument("query parameter \"to\": must be later than \"from\"");
  }
  if (*to - *from > kMaxMeterReadRangeMs) {
    return Status::InvalidArgument("query parameter \"to\": the range is longer than " +
                                   std::to_string(kMaxMeterReadRangeMs / 86400000) +
                                   " days; ask for it in parts");
  }
  Result<std::vector<MainMeterRead>> reads = ListMainMeterReads(db);
  if (!reads.ok()) return reads.status();
  json out = json::array();
  for (const MainMeterRead& read : *reads) {
    // A register read at a moment in [from, to); a period read overlapping it.
    const UnixMs first = read.kind == MeterReadKind::kPeriod ? read.period_start_ms : read.at_ms;
    const bool touches = read.kind == MeterReadKind::kPeriod
                             ? first < *to && read.at_ms > *from
                             : *from <= read.at_ms && read.at_ms < *to;
    if (touches) out.push_back(ReadJson(zone, read));
  }
  return HttpResponse::Json(json{{"zone", zone.zone_name()},
                                 {"from", FormatLocalRfc3339(zone, *from)},
                                 {"to", FormatLocalRfc3339(zone, *to)},
                                 {"reads", out},
                                 {"units", {{"kwh", "kWh"}}}}
                                .dump());
}

// Member `name` of `body` as kWh: a finite number (its range is CheckNewMeterRead's).
Result<double> KwhMember(const json& body, const char* name) {
  const json& value = body[name];
  if (!value.is_number() || !std::isfinite(value.get<double>())) {
    return Status::InvalidArgument(std::string("body.") + name + ": expected a number of kWh, got " +
                                   value.dump());
  }
  return value.get<double>();
}

Result<UnixMs> TimeMember(const json& body, const char* name, const std::string& zone) {
  const json& value = body[name];
  if (!value.is_string()) {
    return Status::InvalidArgument(std::string("body.") + name +
                                   ": expected a time as a string, got " + value.dump());
  }
  Result<UnixMs> instant = ParseSiteTime(value.get<std::string>(), zone);
  if (!instant.ok()) {
    return Status::InvalidArgument(std::string("body.") + name + ": " + instant.status().message());
  }
  return instant;
}

// The read a POST body describes, or which member is wrong and why.
Result<MainMeterRead> ReadFromBody(const std::string& text, const std::string& zone) {
  const std::string shapes =
      "expected a JSON object {\"register_kwh\": N, \"at\": TIME} or {\"kwh\": N, \"from\": "
      "TIME, \"to\": TIME}, with an optional \"source\"";
  json body = json::parse(text, nullptr, false);
  if (body.is_discarded() || !body.is_object()) return Status::InvalidArgument("body: " + shapes);
  for (const auto& [name, value] : body.items()) {
    if (name != "register_kwh" && name != "at" && name != "kwh" && name != "from" &&
        name != "to" && name != "source") {
      return Status::InvalidArgument("body." + name + ": not known here; " + shapes);
    }
  }
  MainMeterRead read;
  read.source = "typed in";
  if (body.contains("source")) {
    const json& source = body["source"];
    if (!source.is_string() || source.get<std::string>().empty() ||
        source.get<std::string>().size() > kMaxMeterSourceBytes ||
        source.get<std::string>().find_first_of("\r\n") != std::string::npos) {
      return Status::InvalidArgument("body.source: 1 to 200 bytes on one line");
    }
    read.source = source.get<std::string>();
  }
  const bool as_register = body.contains("register_kwh");
  const bool as_period = body.contains("kwh");
  if (as_register == as_period) return Status::InvalidArgument("body: " + shapes);
  if (as_register) {
    if (!body.contains("at") || body.contains("from") || body.contains("to")) {
      return Status::InvalidArgument("body: register_kwh needs \"at\", and no \"from\" or \"to\"");
    }
    Result<double> kwh = KwhMember(body, "register_kwh");
    if (!kwh.ok()) return kwh.status();
    Result<UnixMs> at = TimeMember(body, "at", zone);
    if (!at.ok()) return at.status();
    read.kwh = *kwh;
    read.at_ms = *at;
    return read;
  }
  if (!body.contains("from") || !body.contains("to") || body.contains("at")) {
    return Status::InvalidArgument("body: kwh needs \"from\" and \"to\", and no \"at\"");
  }
  Result<double> kwh = KwhMember(body, "kwh");
  if (!kwh.ok()) return kwh.status();
  Result<UnixMs> from = TimeMember(body, "from", zone);
  if (!from.ok()) return from.status();
  Result<UnixMs> to = TimeMember(body, "to", zone);
  if (!to.ok()) return to.status();
  read.kind = MeterReadKind::kPeriod;
  read.kwh = *kwh;
  read.period_start_ms = *from;
  read.at_ms = *to;
  return read;
}

// A connection of the request's own that may write (the readers are query-only).
Result<std::unique_ptr<Database>> OpenWriter(const ApiContext& context) {
  StorageConfig storage = context.config->storage;
  storage.path = context.database_path;
  return Database::Open(storage);
}

Result<HttpResponse> AddRead(const ApiContext& context, const LocalTime& zone,
                             const HttpRequest& request) {
  if (Status known = CheckParameters(request, {}); !known.ok()) return known;
  Result<MainMeterRead> read = ReadFromBody(request.body, zone.zone_name());
  if (!read.ok()) return read.status();
  Result<std::unique_ptr<Database>> db = OpenWriter(context);
  if (!db.ok()) return db.status();
  Result<std::int64_t> id = AddMainMeterRead(**db, *read, WallClockMs());
  if (!id.ok()) {
    if (id.status().code() != StatusCode::kInvalidArgument) return id.status();
    return Status::InvalidArgument("body: refused, nothing stored: " + id.status().message());
  }
  read->id = *id;
  HttpResponse response = HttpResponse::Json(ReadJson(zone, *read).dump(), 201);
  response.headers.emplace_back("Location", "/v1/main-meter/reads/" + std::to_string(*id));
  return response;
}

Result<HttpResponse> RemoveRead(const ApiContext& context, const HttpRequest& request) {
  const std::string& text = request.path_params[0];
  std::int64_t id = 0;
  auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), id);
  if (text.empty() || text.size() > 18 || text.find_first_not_of("0123456789") != std::string::npos ||
      error != std::errc() || end != text.data() + text.size() || id < 1) {
    return Status::NotFound("no main-meter read \"" + text + "\" (ids are whole numbers from 1)");
  }
  Result<std::unique_ptr<Database>> db = OpenWriter(context);
  if (!db.ok()) return db.status();
  Status removed = RemoveMainMeterRead(**db, id);
  if (removed.code() == StatusCode::kNotFound) {
    return Status::NotFound("no main-meter read \"" + text + "\"");
  }
  if (!removed.ok()) return removed;
  HttpResponse response;
  response.status = 204;
  response.content_type.clear();
  return response;
}

}  // namespace

void AddMainMeterRoutes(HttpServer& server, const ApiContext& context) {
  std::shared_ptr<const RouteZone> site = RouteZone::LookUp(*context.config);
  const std::string reads = "/v1/main-meter/reads";
  server.Route("GET", reads,
               RequireToken(context, [site](const HttpRequest& request, const Database& db,
                                            const Scope& scope) -> Result<HttpResponse> {
                 if (!scope.SeesWholeSite()) return Status::NotFound("no resource at " + request.path);
                 if (!site->zone) return site->error;
                 return ListReads(*site->zone, request, db);
               }));
  server.Route("POST", reads,
               RequireToken(context, [context, site](const HttpRequest& request, const Database&,
                                                     const Scope& scope) -> Result<HttpResponse> {
                 if (!scope.SeesWholeSite()) return Status::NotFound("no resource at " + request.path);
                 if (scope.kind != Scope::Kind::kAdmin) return Forbidden();
                 if (!site->zone) return site->error;
                 return AddRead(context, *site->zone, request);
               }));
  server.Route("DELETE", reads + "/([^/]+)",
               RequireToken(context, [context](const HttpRequest& request, const Database&,
                                               const Scope& scope) -> Result<HttpResponse> {
                 if (!scope.SeesWholeSite()) return Status::NotFound("no resource at " + request.path);
                 if (scope.kind != Scope::Kind::kAdmin) return Forbidden();
                 return RemoveRead(context, request);
               }));
}

}  // namespace ampledger
