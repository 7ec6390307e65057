// config/alert_rule_reader.cpp
// ReadAlertRule: an [[alert]] table. The kind is read first, because it decides which other
// keys the rule takes.
#include "config/alert_rule_reader.h"

namespace ampledger {

namespace {

using Keys = std::vector<std::string_view>;

std::string Quote(std::string_view text) {
  return "\"" + std::string(text) + "\"";
}

// "HH:MM", 00:00 to 23:59.
bool IsClockTime(const std::string& text) {
  if (text.size() != 5 || text[2] != ':') return false;
  for (int i : {0, 1, 3, 4}) {
    if (text[i] < '0' || text[i] > '9') return false;
  }
  int hours = (text[0] - '0') * 10 + (text[1] - '0');
  int minutes = (text[3] - '0') * 10 + (text[4] - '0');
  return hours < 24 && minutes < 60;
}

// The keys each alert kind takes besides id and kind.
Keys AlertKeys(AlertKind kind) {
  switch (kind) {
    case AlertKind::kPowerAbove:
    case AlertKind::kPowerBelow:
      return {"circuits", "units", "level_watts", "clear_watts", "hold_seconds"};
    case AlertKind::kBudget:
      return {"circuits", "units", "budget_kwh", "budget_cost", "budget_period"};
    case AlertKind::kCycleDone:
      return {"circuits", "level_watts", "clear_watts", "quiet_seconds", "min_run_seconds"};
    case AlertKind::kLeftOn:
      return {"circuits", "level_watts", "hold_seconds", "window_start", "window_end"};
    case AlertKind::kNodeSilent: return {"nodes", "missed_intervals"};
    case AlertKind::kStandbyCreep: return {"circuits", "units", "level_watts", "nights"};
  }
  return {};
}

void ReadAlertWindow(TableReader& r, AlertRuleConfig* alert) {
  for (auto [key, out] : {std::pair{"window_start", &alert->window_start},
                          std::pair{"window_end", &alert->window_end}}) {
    if (r.String(key, out) && !IsClockTime(*out)) {
      r.Fail(key,
             "expected a local time \"HH:MM\" from \"00:00\" to \"23:59\", got " + Quote(*out));
    }
  }
  if (r.Has("window_start") != r.Has("window_end")) {
    r.Fail(r.Has("window_start") ? "window_end" : "window_start",
           "missing; give both window_start and window_end, or neither");
  } else if (!alert->window_start.empty() && alert->window_start == alert->window_end) {
    r.Fail("window_end",
           "expected a time other than window_start, got " + Quote(alert->window_end));
  }
}

void ReadBudget(TableReader& r, AlertRuleConfig* alert) {
  r.Number("budget_kwh", &alert->budget_kwh, {0, 1e9, true});
  r.Number("budget_cost", &alert->budget_cost, {0, 1e9, true});
  if (r.Has("budget_kwh") == r.Has("budget_cost")) {
    r.Fail("budget_kwh", r.Has("budget_kwh") ? "give budget_kwh or budget_cost, not both"
                                             : "missing; expected budget_kwh or budget_cost");
  }
  std::string_view period;
  if (r.Choice<std::string_view>(
          "budget_period", {{"day", "day"}, {"week", "week"}, {"cycle", "cycle"}}, &period)) {
    alert->budget_period = std::string(period);
  }
}

}  // namespace

void ReadAlertRule(TableReader& r, AlertRuleConfig* alert) {
  r.AllowOnly({"id", "kind", "circuits", "units", "nodes", "level_watts", "clear_watts",
               "hold_seconds", "quiet_seconds", "min_run_seconds", "missed_intervals", "nights",
               "window_start", "window_end", "budget_kwh", "budget_cost", "budget_period"});
  r.Id("id", &alert->id);
  if (!r.Choice<AlertKind>("kind",
                           {{"power_above", AlertKind::kPowerAbove},
                            {"power_below", AlertKind::kPowerBelow},
                            {"budget", AlertKind::kBudget},
                            {"cycle_done", AlertKind::kCycleDone},
                            {"left_on", AlertKind::kLeftOn},
                            {"node_silent", AlertKind::kNodeSilent},
                            {"standby_creep", AlertKind::kStandbyCreep}},
                           &alert->kind, Need::kRequired)) {
    return;
  }
  const AlertKind kind = alert->kind;
  const std::string kind_text = "kind = " + Quote(AlertKindName(kind));
  Keys allowed = AlertKeys(kind);
  allowed.insert(allowed.begin(), {"id", "kind"});
  r.AllowOnly(allowed, "does not apply to " + kind_text);

  r.Strings("circuits", &alert->circuits);
  r.Strings("units", &alert->units);
  r.Strings("nodes", &alert->nodes);
  if (kind == AlertKind::kCycleDone || kind == AlertKind::kLeftOn) {
    if (alert->circuits.empty()) r.Fail("circuits", "missing; expected the circuits to watch");
  } else if (kind != AlertKind::kNodeSilent && alert->circuits.empty() && alert->units.empty()) {
    r.Fail("circuits", "missing; expected circuits or units to watch");
  }

  if (kind != AlertKind::kBudget && kind != AlertKind::kNodeSilent) {
    r.Number("level_watts", &alert->level_watts, {0, 1e6, true}, Need::kRequired);
    alert->clear_watts = alert->level_watts;
    bool below = kind == AlertKind::kPowerBelow;
    NumberRange clear_range =
        below ? NumberRange{alert->level_watts, 1e6} : NumberRange{0, alert->level_watts};
    r.Number("clear_watts", &alert->clear_watts, clear_range);
  }
  r.Number("hold_seconds", &alert->hold_seconds, {0, 604800});
  r.Number("quiet_seconds", &alert->quiet_seconds, {0, 86400});
  r.Number("min_run_seconds", &alert->min_run_seconds, {0, 86400});
  r.Integer("missed_intervals", &alert->missed_intervals, 1, 1000);
  r.Integer("nights", &alert->nights, 1, 60);
  ReadAlertWindow(r, alert);
  if (kind == AlertKind::kLeftOn && alert->hold_seconds <= 0 && alert->window_start.empty()) {
    r.Fail("hold_seconds",
           "missing; kind = \"left_on\" needs hold_seconds > 0 or "
           "window_start and window_end");
  }
  if (kind == AlertKind::kBudget) ReadBudget(r, alert);
}

}  // namespace ampledger
