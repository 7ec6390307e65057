// tests/reliability/alert_check.h
// The crash tool's alert check: the alert events the daemon stored equal a replay of the
// stored readings, in time order, through the same rules (daemon/metering/alert_evaluator.h):
// every event once, none missing, none doubled, none extra, at the same time and (for a
// finished cycle) with the same energy. A SIGKILL between a commit and the next must leave
// the alert states and events exactly as if there had been no crash.
// The replay sees readings in time order; the daemon sees them in the order they arrive, and
// ignores a reading older than one it already used. So the rules must watch only circuits of
// nodes that send one pack at a time (a window of 1), whose readings arrive in time order.
#pragma once

#include <nlohmann/json.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "config/config.h"
#include "daemon/metering/alert_evaluator.h"
#include "storage/database.h"

namespace ampledger::reliability {

struct AlertCheck {
  int expected = 0;    // events of the replay
  int stored = 0;      // events in alert_event
  int mismatches = 0;  // positions where they differ (or could not be read)
};

// Replays every stored reading of `node` and compares with every stored event.
inline AlertCheck CompareAlertEvents(const Config& config, const std::string& node) {
  AlertCheck check;
  Result<AlertEvaluator> evaluator = AlertEvaluator::Create(config);
  Result<std::unique_ptr<Database>> db = Database::OpenReader(config.storage.path);
  if (!evaluator.ok() || !db.ok()) return {0, 0, 1};
  Result<Statement> readings = (*db)->Prepare(
      "SELECT r.t_end, r.duration_ms, r.real_w, s.channel FROM reading r "
      "JOIN channel_series s ON s.id = r.channel WHERE s.node = ?1 ORDER BY r.t_end, s.channel");
  if (!readings.ok()) return {0, 0, 1};
  readings->Bind(1, node);
  std::vector<AlertOutcome> replayed;
  std::vector<ChannelReading> pack;  // the readings of one interval end, as one pack
  auto flush = [&] {
    if (!pack.empty()) evaluator->OnReadings(pack, pack.front().end_ms, &replayed);
    pack.clear();
  };
  for (;;) {
    Result<bool> row = readings->Step("replay readings");
    if (!row.ok()) return {0, 0, 1};
    if (!*row) break;
    ChannelReading reading;
    reading.end_ms = readings->Int(0);
    reading.duration_ms = static_cast<std::int32_t>(readings->Int(1));
    reading.real_watts = readings->Double(2);
    reading.channel = config.FindChannelIndex(node, readings->Text(3));
    if (!pack.empty() && pack.front().end_ms != reading.end_ms) flush();
    pack.push_back(reading);
  }
  flush();

  Result<Statement> events = (*db)->Prepare(
      "SELECT rule, subject, kind, at_ms, value_json FROM alert_event ORDER BY id");
  if (!events.ok()) return {0, 0, 1};
  check.expected = static_cast<int>(replayed.size());
  for (;;) {
    Result<bool> row = events->Step("read events");
    if (!row.ok()) return {check.expected, check.stored, check.mismatches + 1};
    if (!*row) break;
    const std::size_t i = static_cast<std::size_t>(check.stored++);
    if (i >= replayed.size()) {
      ++check.mismatches;  // an event the replay does not have
      continue;
    }
    const AlertOutcome& want = replayed[i];
    bool same = events->Text(0) == want.rule && events->Text(1) == want.subject &&
                events->Text(2) == AlertEventKindName(want.transition.kind) &&
                events->Int(3) == want.transition.at_ms;
    if (const std::optional<double> wh = want.transition.Value("energy_wh")) {
      const nlohmann::json values = nlohmann::json::parse(events->Text(4), nullptr, false);
      same = same && values.contains("energy_wh") && values["energy_wh"].is_number() &&
             std::fabs(values["energy_wh"].get<double>() - *wh) <= 1e-9 * std::fabs(*wh) + 1e-9;
    }
    check.mismatches += same ? 0 : 1;
  }
  if (check.stored < check.expected) check.mismatches += check.expected - check.stored;
  return check;
}

}  // namespace ampledger::reliability
