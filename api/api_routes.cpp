#include "api/api_routes.h"

#include <sys/statvfs.h>

#include <chrono>
#include <filesystem>
#include <nlohmann/json.hpp>

#include "api/metrics.h"
#include "storage/database.h"
#include "storage/queries.h"

namespace ampledger {

namespace {

using nlohmann::json;

// Below this much free space the daemon is still running but not ready: SQLite needs room
// for the WAL and checkpoints (common practice: keep well clear of a full disk).
constexpr std::uint64_t kMinFreeBytes = 64ull << 20;

UnixMs NowMs() {
  return std::chrono::duration_cast<std::chrono::milliseconds>(
             std::chrono::system_clock::now().time_since_epoch())
      .count();
}

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
      {"time", NowMs()},
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
Result<std::vector<ChannelReading>> LatestReadings(const ApiContext& context, UnixMs now) {
  Result<std::unique_ptr<Database>> db = Database::OpenReader(context.database_path);
  if (!db.ok()) return db.status();
  return ReadLatestReadings(**db, *context.series, now - 3600 * kMsPerSecond);
}

std::uint64_t FileBytes(const std::string& path) {
  std::error_code error;
  std::uintmax_t size = std::filesystem::file_size(path, error);
  return error ? 0 : size;
}

Result<HttpResponse> Metrics(const ApiContext& context) {
  const UnixMs now = NowMs();
  Result<std::vector<ChannelReading>> latest = LatestReadings(context, now);
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

// Live values per circuit: the newest reading of each of its channels in the last hour.
Result<HttpResponse> Live(const ApiContext& context) {
  const UnixMs now = NowMs();
  Result<std::vector<ChannelReading>> latest = LatestReadings(context, now);
  if (!latest.ok()) return latest.status();
  const Config& config = *context.config;
  std::vector<json> circuits(config.circuits.size());
  for (size_t i = 0; i < config.circuits.size(); ++i) {
    circuits[i] = {{"id", config.circuits[i].id}, {"watts", 0.0}, {"va", 0.0}, {"amps", 0.0},
                   {"direction", DirectionName(config.circuits[i].direction)},
                   {"reading_end", nullptr}};
  }
  for (const ChannelReading& reading : *latest) {
    int circuit = context.series->circuit_of_channel[reading.channel];
    if (circuit < 0) continue;
    json& entry = circuits[circuit];
    entry["watts"] = entry["watts"].get<double>() + reading.real_watts;
    entry["va"] = entry["va"].get<double>() + reading.apparent_va;
    entry["amps"] = entry["amps"].get<double>() + reading.amps;
    entry["volts"] = reading.volts;
    if (entry["reading_end"].is_null() || entry["reading_end"].get<UnixMs>() < reading.end_ms) {
      entry["reading_end"] = reading.end_ms;
      entry["age_s"] = (now - reading.end_ms) / 1000.0;
    }
  }
  return HttpResponse::Json(json{{"circuits", circuits}, {"units", {{"power", "W"}}}}.dump());
}

}  // namespace

void AddApiRoutes(HttpServer& server, const ApiContext& context) {
  server.Route("GET", "/v1/health", [context](const HttpRequest&) { return Health(context); });
  server.Route("GET", "/v1/site", [context](const HttpRequest&) { return Site(context); });
  server.Route("GET", "/v1/nodes", [context](const HttpRequest&) { return Nodes(context); });
  server.Route("GET", "/v1/live", [context](const HttpRequest&) { return Live(context); });
  server.Route("GET", "/metrics", [context](const HttpRequest&) { return Metrics(context); });
}

}  // namespace ampledger
