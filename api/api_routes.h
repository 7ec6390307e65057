// api/api_routes.h
// The JSON API's routes under /v1, registered on an HttpServer. Handlers run on the server's
// worker threads; each request leases a read-only database connection (api/reader_pool.h;
// WAL lets it read while the writer writes), and reads the writer's health and the ingest counters, which
// are thread-safe.
//
// Every route but /v1/health, /v1/ready and /v1/openapi.json (the OpenAPI 3.1 description of
// them all, api/openapi.json) needs a bearer token (api/token.h), looked up on that
// connection for each request: 401 with WWW-Authenticate when missing or invalid.
// Site-wide routes (/v1/site, /v1/nodes, /metrics) need admin or viewer; a unit token gets
// the 404 of a path that does not exist. /v1/live, /v1/circuits, /v1/units, the series and
// /v1/energy show a unit token only its own unit and circuits; the others answer 404 as for
// an unknown id.
#pragma once

#include <functional>
#include <memory>
#include <string>

#include "api/http_server.h"
#include "api/reader_pool.h"
#include "api/token.h"
#include "config/config.h"
#include "daemon/metering/tariff_schedule.h"
#include "daemon/ingest/ingest_stats.h"
#include "daemon/ingest/udp_receiver.h"
#include "storage/alert_recorder.h"
#include "storage/reading_writer.h"
#include "storage/series.h"

namespace ampledger {

struct MqttStats;  // api/mqtt_publisher.h

// What the routes read. Every pointer must outlive the server.
struct ApiContext {
  const Config* config;
  const SeriesMap* series;
  std::string database_path;
  const ReadingWriter* writer;
  const IngestStats* ingest;
  const UdpReceiver* receiver;  // for the kernel's drop count
  // The alert rules' recorder: alert and event routes (api/alert_routes.h); nullptr = none.
  AlertRecorder* alerts = nullptr;
  // The site's tariffs by date (Service::tariffs()); nullptr or empty = the site has none, and
  // the cost, tariff, cycle and statement routes answer 404 saying so.
  const TariffSchedule* tariffs = nullptr;
  // The MQTT publisher's counters for /metrics; nullptr = [mqtt] is off.
  const MqttStats* mqtt = nullptr;
  // Reader connections of database_path for the requests; AddApiRoutes makes them when null.
  std::shared_ptr<ReaderPool> readers = nullptr;
};

void AddApiRoutes(HttpServer& server, const ApiContext& context);

// A handler that runs for a valid bearer token, on the request's leased reader connection, with
// the token's scope (route files use it through RequireToken).
using ScopedHandler =
    std::function<Result<HttpResponse>(const HttpRequest&, const Database&, const Scope&)>;

// Wraps `handler` in the token check every route but /v1/health has (401 without a valid
// token); the handler decides what the scope may see.
HttpHandler RequireToken(const ApiContext& context, ScopedHandler handler);

}  // namespace ampledger
