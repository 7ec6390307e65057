// api/interop_routes.cpp
#include "api/interop_routes.h"

#include <memory>

#include "api/access.h"
#include "api/reconciliation_route.h"
#include "api/usage_export.h"

namespace ampledger {

void AddInteropRoutes(HttpServer& server, const ApiContext& context) {
  auto zone = std::make_shared<Result<LocalTime>>(LocalTime::ForZone(context.config->site.time_zone));
  server.Route("GET", "/v1/units/([^/]+)/usage.xml",
               RequireToken(context, [context, zone](const HttpRequest& request,
                                                     const Database& db,
                                                     const Scope& scope) -> Result<HttpResponse> {
                 const Config& config = *context.config;
                 const std::string& id = request.path_params[0];
                 const int unit = VisibleUnit(config, scope, id);
                 if (unit < 0) return Status::NotFound("no unit \"" + id + "\"");
                 if (!zone->ok()) return zone->status();
                 UsageSubject subject{"unit", id, {}};
                 for (size_t i = 0; i < config.circuits.size(); ++i) {
                   if (OwnerOfCircuit(config, static_cast<int>(i)) == unit) {
                     subject.circuits.push_back(static_cast<int>(i));
                   }
                 }
                 return AnswerUsageExport(request, config, *context.series, **zone, db, subject);
               }));
  server.Route("GET", "/v1/circuits/([^/]+)/usage.xml",
               RequireToken(context, [context, zone](const HttpRequest& request,
                                                     const Database& db,
                                                     const Scope& scope) -> Result<HttpResponse> {
                 const std::string& id = request.path_params[0];
                 const int circuit = VisibleCircuit(*context.config, scope, id);
                 if (circuit < 0) return Status::NotFound("no circuit \"" + id + "\"");
                 if (!zone->ok()) return zone->status();
                 return AnswerUsageExport(request, *context.config, *context.series, **zone, db,
                                          UsageSubject{"circuit", id, {circuit}});
               }));
  server.Route("GET", "/v1/reconciliation",
               RequireToken(context, [context, zone](const HttpRequest& request,
                                                     const Database& db,
                                                     const Scope& scope) -> Result<HttpResponse> {
                 // The whole site's meter: a unit token gets the 404 of an unknown path.
                 if (!scope.SeesWholeSite()) {
                   return Status::NotFound("no resource at " + request.path);
                 }
                 if (!zone->ok()) return zone->status();
                 return AnswerReconciliation(request, *context.config, *context.series, **zone,
                                             db);
               }));
}

}  // namespace ampledger
