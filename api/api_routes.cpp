#include "api/api_routes.h"

#include <sys/statvfs.h>

#include <chrono>
#include <filesystem>
#include <nlohmann/json.hpp>

#include "api/access.h"
#include "api/alert_routes.h"
#include "api/api_limits.h"
#include "api/metrics.h"
#include "api/problem.h"
#include "api/series_route.h"
#include "api/token.h"
#include "config/wall_clock.h"
#include "storage/database.h"
#include "storage/queries.h"

namespace ampledger {

namespace {

using nlohmann::json;

// Below this much free space the daemon is still running but not ready: SQLite needs room
// for the WAL and checkpoints (common practice: keep well clear of a full disk).
constexpr std::uint64_t kMinFreeBytes = 64ull << 20;

std::uint64_t FreeBytes(const std::string& database_path) {
  struct statvfs info {};
  std::string folder = std::filesystem::path(database_path).parent_path().string();
  if (::statvfs(folder.empty() ? "." : folder.c_str(), &info) != 0) return 0;
  return static_cast<std::uint64_t>(info.f_bavail) * info.f_frsize;
}

Result<HttpResponse> Health(const ApiContext& context) {
  Status writer = context.writer->Health();
  std::uint64_t free_bytes = FreeBytes(context.database_path);
  bool ready = writer.ok() && free_bytes >= kMinFreeBytes;
  json body = {
      {"status", ready ? "ready" : "degraded"},
      {"writer", writer.ok() ? "ok" : writer.ToString()},
      {"disk_free_bytes", free_bytes},
      {"time", WallClockMs()},
  };
  // 503 tells a load balancer or script that acknowledgements have stopped.
  return HttpResponse::Json(body.dump(), ready ? 200 : 503);
}

Result<HttpResponse> Site(const ApiContext& context) {
  const Config& config = *context.config;
  json circuits = json::array();
  for (const CircuitConfig& circuit : config.circuits) {
    circuits.push_back({{"id", circuit.id},
                        {"name", circuit.name},
                        {"direction", DirectionName(circuit.direction)}});
  }
  json units = json::array();
  for (const UnitConfig& unit : config.units) {
    units.push_back({{"id", unit.id}, {"name", unit.name}, {"circuits", unit.circuits}});
  }
  json body = {
      {"name", config.site.name},
      {"time_zone", config.site.time_zone},
      {"nominal_volts", config.site.nominal_volts},
      {"currency", config.site.currency},
      {"billing_cycle_day", config.site.billing_cycle_day},
      {"circuits", circuits},
      {"units", units},
  };
  return HttpResponse::Json(body.dump());
}

Result<HttpResponse> Nodes(const ApiContext& context) {
  json nodes = json::array();
  for (const NodeHealth& health : context.ingest->Nodes()) {
    json refused = json::object();
    for (int reason = 0; reason < kRefusalReasonCount; ++reason) {
      if (health.refused[reason] > 0) {
        refused[RefusalName(static_cast<RefusalReason>(reason))] = health.refused[reason];
      }
    }
    json node = {{"id", health.node},
                 {"accepted", health.accepted},
                 {"refused", refused},
                 {"boot", health.boot},
                 {"seq", health.seq},
                 {"reporting_interval_s", health.interval_ms / 1000.0}};
    node["last_seen"] = health.last_seen_ms == 0 ? json(nullptr) : json(health.last_seen_ms);
    nodes.push_back(node);
  }
  const IngestStats& ingest = *context.ingest;
  json refused = json::object();
  for (int reason = 0; reason < kRefusalReasonCount; ++reason) {
    refused[RefusalName(static_cast<RefusalReason>(reason))] = ingest.refused[reason].load();
  }
  json datagrams = {{"received", ingest.received.load()},
                    {"stored", ingest.stored.load()},
                    {"duplicates", ingest.duplicates.load()},
                    {"write_failures", ingest.write_failures.load()},
                    {"acks_sent", ingest.acks_sent.load()},
                    {"kernel_drops", context.receiver->kernel_drops()},
                    {"refused", refused}};
  return HttpResponse::Json(json{{"nodes", nodes},
                                 {"datagrams", datagrams},
                                 {"readings_stored", ingest.readings_stored.load()},
                                 {"time_unit", "ms since 1970-01-01Z"}}
                                .dump());
}

// The newest reading of every channel in the last hour.
Result<std::vector<ChannelReading>> LatestReadings(const ApiContext& context, const Database& db,
                                                   UnixMs now) {
  return ReadLatestReadings(db, *context.series, now - kLiveHorizonMs);
}

std::uint64_t FileBytes(const std::string& path) {
  std::error_code error;
  std::uintmax_t size = std::filesystem::file_size(path, error);
  return error ? 0 : size;
}

Result<HttpResponse> Metrics(const ApiContext& context, const Database& db) {
  const UnixMs now = WallClockMs();
  Result<std::vector<ChannelReading>> latest = LatestReadings(context, db, now);
  if (!latest.ok()) return latest.status();
  const Config& config = *context.config;
  std::vector<CircuitPower> live(config.circuits.size());
  std::vector<bool> seen(config.circuits.size(), false);
  for (size_t i = 0; i < config.circuits.size(); ++i) {
    live[i] = {config.circuits[i].id, DirectionName(config.circuits[i].direction), 0};
  }
  for (const ChannelReading& reading : *latest) {
    int circuit = context.series->circuit_of_channel[reading.channel];
    if (circuit < 0) continue;
    live[circuit].watts += reading.real_watts;
    seen[circuit] = true;
  }
  MetricsSnapshot snapshot;
  snapshot.ingest = context.ingest;
  snapshot.kernel_drops = context.receiver->kernel_drops();
  snapshot.writer_healthy = context.writer->Health().ok();
  snapshot.database_bytes =
      FileBytes(context.database_path) + FileBytes(context.database_path + "-wal");
  for (size_t i = 0; i < live.size(); ++i) {
    if (seen[i]) snapshot.live.push_back(live[i]);
  }
  HttpResponse response;
  response.content_type = kOpenMetricsContentType;
  response.body = FormatOpenMetrics(snapshot);
  return response;
}

// Live values per circuit the scope may see: the newest reading of each of its channels in
// the last hour.
Result<HttpResponse> Live(const ApiContext& context, const Database& db, const Scope& scope) {
  const UnixMs now = WallClockMs();
  Result<std::vector<ChannelReading>> latest = LatestReadings(context, db, now);
  if (!latest.ok()) return latest.status();
  const Config& config = *context.config;
  std::vector<int> slot(config.circuits.size(), -1);  // circuit index -> position in output
  json circuits = json::array();
  for (int i : VisibleCircuits(config, scope)) {
    slot[i] = static_cast<int>(circuits.size());
    circuits.push_back({{"id", config.circuits[i].id}, {"watts", 0.0}, {"va", 0.0},
                        {"amps", 0.0}, {"direction", DirectionName(config.circuits[i].direction)},
                        {"reading_end", nullptr}});
  }
  for (const ChannelReading& reading : *latest) {
    int circuit = context.series->circuit_of_channel[reading.channel];
    if (circuit < 0 || slot[circuit] < 0) continue;
    json& entry = circuits[slot[circuit]];
    entry["watts"] = entry["watts"].get<double>() + reading.real_watts;
    entry["va"] = entry["va"].get<double>() + reading.apparent_va;
    entry["amps"] = entry["amps"].get<double>() + reading.amps;
    entry["volts"] = reading.volts;
    if (entry["reading_end"].is_null() || entry["reading_end"].get<UnixMs>() < reading.end_ms) {
      entry["reading_end"] = reading.end_ms;
      entry["age_s"] = (now - reading.end_ms) / 1000.0;
    }
  }
  return HttpResponse::Json(json{{"circuits", circuits},
                                 {"units",
                                  {{"watts", "W"}, {"va", "VA"}, {"amps", "A"}, {"volts", "V"},
                                   {"age_s", "s"}, {"reading_end", "ms since 1970-01-01Z"}}}}
                                .dump());
}

Result<HttpResponse> Circuits(const ApiContext& context, const Scope& scope) {
  const Config& config = *context.config;
  json circuits = json::array();
  for (int i : VisibleCircuits(config, scope)) {
    const CircuitConfig& circuit = config.circuits[i];
    json channels = json::array();
    for (const ChannelRef& channel : circuit.channels) channels.push_back(channel.ToString());
    const int owner = OwnerOfCircuit(config, i);
    circuits.push_back({{"id", circuit.id},
                        {"name", circuit.name},
                        {"direction", DirectionName(circuit.direction)},
                        {"unit", owner >= 0 ? json(config.units[owner].id) : json(nullptr)},
                        {"channels", channels}});
  }
  return HttpResponse::Json(json{{"circuits", circuits}}.dump());
}

Result<HttpResponse> Units(const ApiContext& context, const Scope& scope) {
  const Config& config = *context.config;
  json units = json::array();
  for (const UnitConfig& unit : config.units) {
    if (VisibleUnit(config, scope, unit.id) < 0) continue;
    units.push_back({{"id", unit.id}, {"name", unit.name}, {"circuits", unit.circuits}});
  }
  return HttpResponse::Json(json{{"units", units}}.dump());
}

// The site's zone, looked up once; series routes answer its error if it has none.
struct SiteZone {
  std::optional<LocalTime> zone;
  Status error;
};

Result<HttpResponse> CircuitSeries(const ApiContext& context, const SiteZone& site,
                                   const HttpRequest& request, const Database& db,
                                   const Scope& scope) {
  const std::string& id = request.path_params[0];
  const int circuit = VisibleCircuit(*context.config, scope, id);
  if (circuit < 0) return Status::NotFound("no circuit \"" + id + "\"");
  if (!site.zone) return site.error;
  return AnswerSeries(request, *context.config, *context.series, *site.zone, db,
                      SeriesSubject{"circuit", id, {circuit}});
}

Result<HttpResponse> UnitSeries(const ApiContext& context, const SiteZone& site,
                                const HttpRequest& request, const Database& db,
                                const Scope& scope) {
  const Config& config = *context.config;
  const std::string& id = request.path_params[0];
  const int unit = VisibleUnit(config, scope, id);
  if (unit < 0) return Status::NotFound("no unit \"" + id + "\"");
  if (!site.zone) return site.error;
  SeriesSubject subject{"unit", id, {}};
  for (size_t i = 0; i < config.circuits.size(); ++i) {
    if (OwnerOfCircuit(config, static_cast<int>(i)) == unit) {
      subject.circuits.push_back(static_cast<int>(i));
    }
  }
  return AnswerSeries(request, config, *context.series, *site.zone, db, subject);
}

// What a route needs of its caller's scope.
enum class Reach {
  kScoped,    // any scope; the handler shows only what the scope may see
  kSiteWide,  // admin or viewer; a unit token is told the route does not exist
};

// Whether a request without a token may still be answered (ApiContext::anonymous_status_routes).
enum class Anonymous { kRefused, kAllowedWhenConfigured };

HttpResponse Unauthorized(const std::string& detail, bool token_presented) {
  HttpResponse response;
  response.status = 401;
  response.content_type = kProblemContentType;
  response.body = ProblemJson(ProblemWithStatus(401, detail));
  // RFC 6750 section 3: the challenge, with error="invalid_token" when a token was sent.
  response.headers.emplace_back("WWW-Authenticate",
                                token_presented ? "Bearer realm=\"ampledger\", "
                                                  "error=\"invalid_token\""
                                                : "Bearer realm=\"ampledger\"");
  return response;
}

// Wraps `handler` so it runs only for a valid bearer token, on the request's own reader
// connection. The token is looked up on every request, so a revoked token stops at once.
HttpHandler Guarded(const ApiContext& context, Reach reach, ScopedHandler handler,
                    Anonymous anonymous = Anonymous::kRefused) {
  return [context, reach, handler = std::move(handler), anonymous](
             const HttpRequest& request) -> Result<HttpResponse> {
    Result<std::unique_ptr<Database>> db = Database::OpenReader(context.database_path);
    if (!db.ok()) return db.status();
    if (request.authorization.empty() && context.anonymous_status_routes &&
        anonymous == Anonymous::kAllowedWhenConfigured) {
      return handler(request, **db, Scope{Scope::Kind::kViewer, ""});
    }
    Result<std::optional<Scope>> scope = Authenticate(**db, request.authorization);
    if (!scope.ok()) return scope.status();
    if (!scope->has_value()) {
      return Unauthorized(request.authorization.empty()
                              ? "this route needs an Authorization: Bearer token"
                              : "the bearer token is not valid (malformed, unknown or revoked)",
                          !request.authorization.empty());
    }
    if (reach == Reach::kSiteWide && !(*scope)->SeesWholeSite()) {
      // The answer a path with no route gets: a unit token cannot tell the difference.
      return Status::NotFound("no resource at " + request.path);
    }
    return handler(request, **db, **scope);
  };
}

}  // namespace

HttpHandler RequireToken(const ApiContext& context, ScopedHandler handler) {
  return Guarded(context, Reach::kScoped, std::move(handler));
}

void AddApiRoutes(HttpServer& server, const ApiContext& context) {
  auto site = std::make_shared<SiteZone>();
  Result<LocalTime> zone = LocalTime::ForZone(context.config->site.time_zone);
  if (zone.ok()) {
    site->zone = *zone;
  } else {
    site->error = zone.status();
  }
  // Unauthenticated: a supervisor or load balancer may ask whether the daemon is healthy.
  server.Route("GET", "/v1/health", [context](const HttpRequest&) { return Health(context); });
  server.Route("GET", "/v1/site",
               Guarded(context, Reach::kSiteWide,
                       [context](const HttpRequest&, const Database&, const Scope&) {
                         return Site(context);
                       }));
  server.Route("GET", "/v1/nodes",
               Guarded(context, Reach::kSiteWide,
                       [context](const HttpRequest&, const Database&, const Scope&) {
                         return Nodes(context);
                       },
                       Anonymous::kAllowedWhenConfigured));
  server.Route("GET", "/v1/live",
               Guarded(context, Reach::kScoped,
                       [context](const HttpRequest&, const Database& db, const Scope& scope) {
                         return Live(context, db, scope);
                       },
                       Anonymous::kAllowedWhenConfigured));
  server.Route("GET", "/v1/circuits",
               Guarded(context, Reach::kScoped,
                       [context](const HttpRequest&, const Database&, const Scope& scope) {
                         return Circuits(context, scope);
                       }));
  server.Route("GET", "/v1/units",
               Guarded(context, Reach::kScoped,
                       [context](const HttpRequest&, const Database&, const Scope& scope) {
                         return Units(context, scope);
                       }));
  server.Route("GET", "/v1/circuits/([^/]+)/series",
               Guarded(context, Reach::kScoped,
                       [context, site](const HttpRequest& request, const Database& db,
                                       const Scope& scope) {
                         return CircuitSeries(context, *site, request, db, scope);
                       }));
  server.Route("GET", "/v1/units/([^/]+)/series",
               Guarded(context, Reach::kScoped,
                       [context, site](const HttpRequest& request, const Database& db,
                                       const Scope& scope) {
                         return UnitSeries(context, *site, request, db, scope);
                       }));
  server.Route("GET", "/metrics",
               Guarded(context, Reach::kSiteWide,
                       [context](const HttpRequest&, const Database& db, const Scope&) {
                         return Metrics(context, db);
                       }));
  if (context.alerts != nullptr) AddAlertRoutes(server, context);
}

}  // namespace ampledger
