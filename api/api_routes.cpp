#include "api/api_routes.h"

#include <malloc.h>

#include <algorithm>
#include <chrono>
#include <filesystem>
#include <optional>
#include <nlohmann/json.hpp>

#include "api/access.h"
#include "api/alert_routes.h"
#include "api/api_limits.h"
#include "api/energy_route.h"
#include "api/health.h"
#include "api/interop_routes.h"
#include "api/json_text.h"
#include "api/main_meter_routes.h"
#include "api/metrics.h"
#include "api/openapi_document.h"
#include "api/problem.h"
#include "api/rfc3339.h"
#include "api/series_route.h"
#include "api/statement_routes.h"
#include "api/tariff_routes.h"
#include "api/token.h"
#include "config/wall_clock.h"
#include "storage/database.h"
#include "storage/queries.h"

namespace ampledger {

namespace {

using nlohmann::json;

// A request's scope, if it carries a valid token; nullopt without one (open routes).
std::optional<Scope> OptionalScope(const ApiContext& context, const HttpRequest& request) {
  if (request.authorization.empty()) return std::nullopt;
  Result<ReaderPool::Lease> reader = context.readers->Acquire();
  if (!reader.ok()) return std::nullopt;
  Result<std::optional<Scope>> scope = Authenticate(reader->db(), request.authorization);
  return scope.ok() ? *scope : std::nullopt;
}

// Now as RFC 3339 in UTC ("2026-12-02T01:10:18.250Z").
std::string UtcNow() {
  static const Result<LocalTime> utc = LocalTime::ForZone("UTC");
  return utc.ok() ? FormatLocalRfc3339(*utc, WallClockMs()) : std::to_string(WallClockMs());
}

HealthReport RunChecks(const ApiContext& context) {
  return CheckHealth(context.writer->Health(), context.database_path,
                     static_cast<std::uint64_t>(context.config->storage.min_free_bytes));
}

// Open: pass or fail per check, and why only for a whole-site token (details name paths and
// SQLite errors). 200 whenever the daemon can answer: a full disk should take the daemon out
// of service (/v1/ready), not get it restarted by a liveness probe, which would not help.
Result<HttpResponse> Health(const ApiContext& context, const HttpRequest& request) {
  const HealthReport report = RunChecks(context);
  const std::optional<Scope> scope = OptionalScope(context, request);
  const bool details = scope && scope->SeesWholeSite();
  json checks = json::array();
  for (const HealthCheck& check : report.checks) {
    json entry = {{"name", check.name}, {"status", check.pass ? "pass" : "fail"}};
    if (details && !check.detail.empty()) entry["detail"] = check.detail;
    checks.push_back(entry);
  }
  return HttpResponse::Json(json{{"status", report.Pass() ? "pass" : "fail"},
                                 {"checks", checks},
                                 {"time", UtcNow()}}
                                .dump());
}

// Open: 200 when every check passes, else 503 with Retry-After naming the failing checks, so
// a supervisor or a script can gate on the status code alone.
Result<HttpResponse> Ready(const ApiContext& context) {
  const HealthReport report = RunChecks(context);
  if (report.Pass()) return HttpResponse::Json(json{{"ready", true}}.dump());
  HttpResponse response;
  response.status = 503;
  response.content_type = kProblemContentType;
  response.body = ProblemJson(ProblemWithStatus(
      503, "not ready: failing checks: " + report.FailingNames() + " (see /v1/health)"));
  response.headers.emplace_back("Retry-After", "30");
  return response;
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

// OpenMetrics for a scraper that asks for it, else the Prometheus text format (api/metrics.h).
Result<HttpResponse> Metrics(const ApiContext& context, const Database& db,
                             const HttpRequest& request) {
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
  snapshot.mqtt = context.mqtt;
  snapshot.database_bytes =
      FileBytes(context.database_path) + FileBytes(context.database_path + "-wal");
  // Over every arena: uordblks is what the arenas hand out, hblkhd the large blocks mapped
  // on their own, fordblks what the arenas hold free (glibc's malloc.h).
  const struct mallinfo2 heap = mallinfo2();
  snapshot.heap_in_use_bytes = heap.uordblks + heap.hblkhd;
  snapshot.heap_free_bytes = heap.fordblks;
  snapshot.sqlite_memory_bytes = static_cast<std::uint64_t>(SqliteMemoryInUseBytes());
  for (size_t i = 0; i < live.size(); ++i) {
    if (seen[i]) snapshot.live.push_back(live[i]);
  }
  const bool open_metrics =
      request.accept.find("application/openmetrics-text") != std::string::npos;
  HttpResponse response;
  response.content_type = open_metrics ? kOpenMetricsContentType : kPrometheusTextContentType;
  response.body = FormatMetrics(
      snapshot, open_metrics ? MetricsFormat::kOpenMetrics : MetricsFormat::kPrometheusText);
  return response;
}

// Live values per circuit the scope may see: the newest reading of each of its channels in
// the last hour.
Result<HttpResponse> Live(const ApiContext& context, const Database& db, const Scope& scope) {
  const UnixMs now = WallClockMs();
  Result<std::vector<ChannelReading>> latest = LatestReadings(context, db, now);
  if (!latest.ok()) return latest.status();
  const Config& config = *context.config;
  // Each circuit's sums over its channels' latest readings.
  struct LiveCircuit {
    double watts = 0, va = 0, amps = 0, volts = 0;
    std::optional<UnixMs> reading_end;  // the newest of its readings; none: no reading yet
  };
  std::vector<LiveCircuit> live(config.circuits.size());
  for (const ChannelReading& reading : *latest) {
    const int circuit = context.series->circuit_of_channel[reading.channel];
    if (circuit < 0) continue;
    LiveCircuit& sum = live[circuit];
    sum.watts += reading.real_watts;
    sum.va += reading.apparent_va;
    sum.amps += reading.amps;
    sum.volts = reading.volts;
    if (!sum.reading_end || *sum.reading_end < reading.end_ms) sum.reading_end = reading.end_ms;
  }
  // Written as text, members in key order as dump() would (api/json_text.h says why).
  std::string text = OpenObjectUpTo(json::object(), "circuits");
  text += '[';
  bool first = true;
  for (int i : VisibleCircuits(config, scope)) {
    const LiveCircuit& sum = live[i];
    text += first ? "{" : ",{";
    first = false;
    if (sum.reading_end) {
      text += "\"age_s\":";
      AppendJsonNumber((now - *sum.reading_end) / 1000.0, &text);
      text += ',';
    }
    text += "\"amps\":";
    AppendJsonNumber(sum.amps, &text);
    text += ",\"direction\":";
    AppendJsonString(DirectionName(config.circuits[i].direction), &text);
    text += ",\"id\":";
    AppendJsonString(config.circuits[i].id, &text);
    text += ",\"reading_end\":";
    text += sum.reading_end ? std::to_string(*sum.reading_end) : "null";
    text += ",\"va\":";
    AppendJsonNumber(sum.va, &text);
    if (sum.reading_end) {
      text += ",\"volts\":";
      AppendJsonNumber(sum.volts, &text);
    }
    text += ",\"watts\":";
    AppendJsonNumber(sum.watts, &text);
    text += '}';
  }
  text += ']';
  CloseObjectAfter(json{{"units",
                         {{"watts", "W"}, {"va", "VA"}, {"amps", "A"}, {"volts", "V"},
                          {"age_s", "s"}, {"reading_end", "ms since 1970-01-01Z"}}}},
                   &text);
  return HttpResponse::Json(std::move(text));
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

// The context with its reader pool, made here when the caller has none (at most as many idle
// connections as the server has resident threads).
ApiContext WithReaders(ApiContext context) {
  if (!context.readers) {
    context.readers = std::make_shared<ReaderPool>(context.database_path,
                                                   std::max(1, context.config->http.threads));
  }
  return context;
}

// Wraps `handler` so it runs only for a valid bearer token, on a reader connection leased for
// the request. The token is looked up on every request, so a revoked token stops at once.
HttpHandler Guarded(const ApiContext& caller_context, Reach reach, ScopedHandler handler) {
  return [context = WithReaders(caller_context), reach, handler = std::move(handler)](
             const HttpRequest& request) -> Result<HttpResponse> {
    Result<ReaderPool::Lease> reader = context.readers->Acquire();
    if (!reader.ok()) return reader.status();
    const Database& db = reader->db();
    Result<std::optional<Scope>> scope = Authenticate(db, request.authorization);
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
    return handler(request, db, **scope);
  };
}

}  // namespace

HttpHandler RequireToken(const ApiContext& context, ScopedHandler handler) {
  return Guarded(context, Reach::kScoped, std::move(handler));
}

void AddApiRoutes(HttpServer& server, const ApiContext& caller_context) {
  // One pool for every route, including those the route files add.
  const ApiContext context = WithReaders(caller_context);
  auto site = std::make_shared<SiteZone>();
  Result<LocalTime> zone = LocalTime::ForZone(context.config->site.time_zone);
  if (zone.ok()) {
    site->zone = *zone;
  } else {
    site->error = zone.status();
  }
  // Open: a supervisor or load balancer may ask whether the daemon is healthy and ready.
  server.Route("GET", "/v1/health",
               [context](const HttpRequest& request) { return Health(context, request); });
  server.Route("GET", "/v1/ready", [context](const HttpRequest&) { return Ready(context); });
  // Open: the API's description is public (it is in the source).
  server.Route("GET", "/v1/openapi.json", [](const HttpRequest&) -> Result<HttpResponse> {
    return HttpResponse::Json(kOpenApiDocument);
  });
  server.Route("GET", "/v1/site",
               Guarded(context, Reach::kSiteWide,
                       [context](const HttpRequest&, const Database&, const Scope&) {
                         return Site(context);
                       }));
  server.Route("GET", "/v1/nodes",
               Guarded(context, Reach::kSiteWide,
                       [context](const HttpRequest&, const Database&, const Scope&) {
                         return Nodes(context);
                       }));
  server.Route("GET", "/v1/live",
               Guarded(context, Reach::kScoped,
                       [context](const HttpRequest&, const Database& db, const Scope& scope) {
                         return Live(context, db, scope);
                       }));
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
  server.Route("GET", "/v1/energy",
               Guarded(context, Reach::kScoped,
                       [context, site](const HttpRequest& request, const Database& db,
                                       const Scope& scope) -> Result<HttpResponse> {
                         if (!site->zone) return site->error;
                         return AnswerEnergy(request, *context.config, *context.series,
                                             *site->zone, context.tariffs, db, scope);
                       }));
  server.Route("GET", "/metrics",
               Guarded(context, Reach::kSiteWide,
                       [context](const HttpRequest& request, const Database& db,
                                 const Scope&) { return Metrics(context, db, request); }));
  if (context.alerts != nullptr) AddAlertRoutes(server, context);
  AddTariffRoutes(server, context);
  AddStatementRoutes(server, context);
  AddMainMeterRoutes(server, context);
  AddInteropRoutes(server, context);
}

}  // namespace ampledger
