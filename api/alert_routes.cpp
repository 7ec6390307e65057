// api/alert_routes.cpp
#include "api/alert_routes.h"

#include <charconv>
#include <chrono>
#include <cmath>
#include <memory>
#include <optional>

#include <nlohmann/json.hpp>

#include "api/access.h"
#include "api/api_limits.h"
#include "api/event_json.h"
#include "api/problem.h"

namespace ampledger {

namespace {

using nlohmann::json;

struct RouteSite {
  std::optional<LocalTime> zone;
};

// Whether `scope` may see anything about `subject` ("circuit:<id>", "unit:<id>",
// "node:<id>"): a unit token sees its own unit and circuits, never nodes.
bool SubjectVisible(const Config& config, const Scope& scope, const std::string& subject) {
  if (scope.SeesWholeSite()) return true;
  const std::size_t colon = subject.find(':');
  if (colon == std::string::npos) return false;
  const std::string type = subject.substr(0, colon);
  const std::string id = subject.substr(colon + 1);
  if (type == "circuit") return VisibleCircuit(config, scope, id) >= 0;
  if (type == "unit") return VisibleUnit(config, scope, id) >= 0;
  return false;
}

// Only the parameters in `known`, each at most once.
Status CheckParameters(const HttpRequest& request, std::initializer_list<const char*> known,
                       const std::string& listed) {
  for (const auto& [name, value] : request.query) {
    bool found = false;
    for (const char* candidate : known) found = found || name == candidate;
    if (!found) {
      return Status::InvalidArgument("query parameter \"" + name + "\": not known here (" +
                                     listed + ")");
    }
    if (request.query.count(name) > 1) {
      return Status::InvalidArgument("query parameter \"" + name + "\": given more than once");
    }
  }
  return Status::Ok();
}

// A decimal integer in [low, high], digits only; `fallback` when absent.
Result<std::int64_t> IntegerParameter(const HttpRequest& request, const char* name,
                                      std::int64_t low, std::int64_t high,
                                      std::int64_t fallback) {
  const std::string* text = request.Query(name);
  if (text == nullptr) return fallback;
  std::int64_t value = 0;
  auto [end, error] = std::from_chars(text->data(), text->data() + text->size(), value);
  const bool digits_only = !text->empty() && text->find_first_not_of("0123456789") ==
                                                 std::string::npos;
  if (!digits_only || error != std::errc() || end != text->data() + text->size() ||
      value < low || value > high) {
    return Status::InvalidArgument(std::string("query parameter \"") + name + "\": \"" + *text +
                                   "\" is not a whole number from " + std::to_string(low) +
                                   " to " + std::to_string(high));
  }
  return value;
}

Result<HttpResponse> ActiveAlerts(const ApiContext& context, const RouteSite& site,
                                  const HttpRequest& request, const Database& db,
                                  const Scope& scope) {
  if (Status s = CheckParameters(request, {}, "none"); !s.ok()) return s;
  Result<std::vector<ActiveAlert>> active = ReadActiveAlerts(db);
  if (!active.ok()) return active.status();
  json alerts = json::array();
  for (const ActiveAlert& alert : *active) {
    if (!SubjectVisible(*context.config, scope, alert.subject)) continue;
    json entry = {{"rule", alert.rule},
                  {"subject", SubjectJson(alert.subject)},
                  {"raised_ms", alert.raised_ms},
                  {"acknowledged", alert.acked_ms != 0},
                  {"acknowledged_ms", alert.acked_ms != 0 ? json(alert.acked_ms) : json(nullptr)},
                  {"acknowledged_by", alert.acked_ms != 0 ? json(alert.acked_by) : json(nullptr)},
                  {"silenced_until_ms", alert.silenced_until_ms != 0
                                            ? json(alert.silenced_until_ms)
                                            : json(nullptr)},
                  {"condition", EventJson(*context.config, site.zone, alert.condition)}};
    alerts.push_back(std::move(entry));
  }
  return HttpResponse::Json(
      json{{"alerts", alerts}, {"time_unit", "ms since 1970-01-01Z"}}.dump());
}

HttpResponse Busy(const std::string& detail) {
  HttpResponse response;
  response.status = 503;
  response.content_type = kProblemContentType;
  response.body = ProblemJson(ProblemWithStatus(503, detail));
  response.headers.emplace_back("Retry-After", std::to_string(kEventWaitRetryAfterSeconds));
  return response;
}

Result<HttpResponse> Events(const ApiContext& context, const RouteSite& site,
                            const HttpRequest& request, const Database& db, const Scope& scope) {
  if (Status s = CheckParameters(request, {"after", "wait", "limit"}, "after, wait, limit");
      !s.ok()) {
    return s;
  }
  Result<std::int64_t> after =
      IntegerParameter(request, "after", 0, std::numeric_limits<std::int64_t>::max() - 1, 0);
  if (!after.ok()) return after.status();
  Result<std::int64_t> wait = IntegerParameter(request, "wait", 0, kMaxEventWaitSeconds, 0);
  if (!wait.ok()) return wait.status();
  Result<std::int64_t> limit = IntegerParameter(request, "limit", 1, kMaxEventsPerResponse,
                                                kDefaultEventsPerResponse);
  if (!limit.ok()) return limit.status();

  const auto deadline = EventFeed::Clock::now() + std::chrono::seconds(*wait);
  EventFeed& feed = context.alerts->feed();
  std::int64_t cursor = *after;
  json events = json::array();
  for (;;) {
    Result<std::vector<StoredEvent>> read = ReadEventsAfter(db, cursor, static_cast<int>(*limit));
    if (!read.ok()) return read.status();
    for (const StoredEvent& event : *read) {
      // The cursor moves past events this scope may not see, so they are not read again.
      cursor = event.id;
      if (SubjectVisible(*context.config, scope, event.subject)) {
        events.push_back(EventJson(*context.config, site.zone, event));
      }
    }
    const bool full = static_cast<std::int64_t>(read->size()) == *limit;
    if (!events.empty() || full || EventFeed::Clock::now() >= deadline) break;
    Result<std::int64_t> newest =
        feed.WaitAfter(cursor, deadline, MaxEventWaiters(context.config->http.threads));
    if (!newest.ok()) return Busy(newest.status().message());
    if (*newest <= cursor) break;  // waited the whole time
  }
  return HttpResponse::Json(json{{"events", events},
                                 {"next_after", cursor},
                                 {"time_unit", "ms since 1970-01-01Z"}}
                                .dump());
}

// The (rule, subject) a write route names, if the scope may see it; else the 404 of an
// unknown alert. A viewer token may read but not change alerts.
Result<std::string> TargetSubject(const ApiContext& context, const HttpRequest& request,
                                  const Scope& scope, std::optional<HttpResponse>* refusal) {
  const std::string subject = request.path_params[1] + ":" + request.path_params[2];
  if (!SubjectVisible(*context.config, scope, subject)) {
    return Status::NotFound("no alert \"" + request.path_params[0] + "\" for " + subject);
  }
  if (scope.kind == Scope::Kind::kViewer) {
    HttpResponse response;
    response.status = 403;
    response.content_type = kProblemContentType;
    response.body = ProblemJson(ProblemWithStatus(
        403, "a viewer token may read alerts but not acknowledge or silence them"));
    *refusal = std::move(response);
  }
  return subject;
}

std::string Who(const Scope& scope) { return ScopeName(scope) + " token"; }

Result<HttpResponse> Acknowledge(const ApiContext& context, const HttpRequest& request,
                                 const Scope& scope) {
  std::optional<HttpResponse> refusal;
  Result<std::string> subject = TargetSubject(context, request, scope, &refusal);
  if (!subject.ok()) return subject.status();
  if (refusal) return *refusal;
  Status done = context.alerts->Acknowledge(request.path_params[0], *subject, Who(scope));
  if (!done.ok()) return done;
  return HttpResponse::Json(json{{"rule", request.path_params[0]},
                                 {"subject", SubjectJson(*subject)},
                                 {"acknowledged", true}}
                                .dump());
}

Result<HttpResponse> Silence(const ApiContext& context, const HttpRequest& request,
                             const Scope& scope) {
  std::optional<HttpResponse> refusal;
  Result<std::string> subject = TargetSubject(context, request, scope, &refusal);
  if (!subject.ok()) return subject.status();
  if (refusal) return *refusal;
  json body = json::parse(request.body, nullptr, false);
  const std::string expected = "expected a JSON object {\"seconds\": N}, N from 0 (ends a "
                               "silence) to " + std::to_string(static_cast<int>(kMaxSilenceSeconds));
  if (body.is_discarded() || !body.is_object() || body.size() != 1 || !body.contains("seconds") ||
      !body["seconds"].is_number()) {
    return Status::InvalidArgument("body: " + expected);
  }
  const double seconds = body["seconds"].get<double>();
  if (!std::isfinite(seconds) || seconds < 0 || seconds > kMaxSilenceSeconds) {
    return Status::InvalidArgument("body.seconds: " + expected + ", got " + body["seconds"].dump());
  }
  Status done = context.alerts->Silence(request.path_params[0], *subject,
                                        std::llround(seconds * 1000), Who(scope));
  if (!done.ok()) return done;
  return HttpResponse::Json(json{{"rule", request.path_params[0]},
                                 {"subject", SubjectJson(*subject)},
                                 {"silenced_seconds", seconds}}
                                .dump());
}

}  // namespace

void AddAlertRoutes(HttpServer& server, const ApiContext& context) {
  auto site = std::make_shared<RouteSite>();
  Result<LocalTime> zone = LocalTime::ForZone(context.config->site.time_zone);
  if (zone.ok()) site->zone = *zone;
  server.Route("GET", "/v1/alerts",
               RequireToken(context, [context, site](const HttpRequest& request,
                                                     const Database& db, const Scope& scope) {
                 return ActiveAlerts(context, *site, request, db, scope);
               }));
  server.Route("GET", "/v1/events",
               RequireToken(context, [context, site](const HttpRequest& request,
                                                     const Database& db, const Scope& scope) {
                 return Events(context, *site, request, db, scope);
               }));
  const std::string alert = "/v1/alerts/([^/]+)/(circuit|unit|node)/([^/]+)";
  server.Route("POST", alert + "/acknowledge",
               RequireToken(context, [context](const HttpRequest& request, const Database&,
                                               const Scope& scope) {
                 return Acknowledge(context, request, scope);
               }));
  server.Route("POST", alert + "/silence",
               RequireToken(context, [context](const HttpRequest& request, const Database&,
                                               const Scope& scope) {
                 return Silence(context, request, scope);
               }));
}

}  // namespace ampledger
