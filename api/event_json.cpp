// api/event_json.cpp
#include "api/event_json.h"

#include "api/rfc3339.h"

namespace ampledger {

using nlohmann::json;

json SubjectJson(const std::string& subject) {
  const std::size_t colon = subject.find(':');
  if (colon == std::string::npos) return {{"type", nullptr}, {"id", subject}};
  return {{"type", subject.substr(0, colon)}, {"id", subject.substr(colon + 1)}};
}

json EventJson(const Config& config, const std::optional<LocalTime>& zone,
               const StoredEvent& event) {
  json rule_kind = nullptr;  // a rule since removed from the config
  for (const AlertRuleConfig& rule : config.alerts) {
    if (rule.id == event.rule) rule_kind = AlertKindName(rule.kind);
  }
  // Written by storage/alert_recorder.cpp from our own names and finite numbers.
  json values = json::parse(event.value_json, nullptr, false);
  if (values.is_discarded()) values = json::object();
  Result<LocalTime> utc = zone ? Result<LocalTime>(*zone) : LocalTime::ForZone("UTC");
  return {{"id", event.id},
          {"kind", event.kind},
          {"rule", event.rule},
          {"rule_kind", rule_kind},
          {"subject", SubjectJson(event.subject)},
          {"at", utc.ok() ? json(FormatLocalRfc3339(*utc, event.at_ms)) : json(nullptr)},
          {"at_ms", event.at_ms},
          {"reason", event.reason},
          {"values", values},
          {"by", event.by},
          {"silenced", event.silenced}};
}

}  // namespace ampledger
