// daemon/metering/alert_state.h
// The state of one alert rule for one subject (a circuit, a unit or a node), as a plain value
// that storage keeps between restarts. Which fields a kind uses is written beside each; the
// others stay zero. Serialize() gives a short text that Parse() reads back exactly (doubles
// round-trip through std::to_chars), so a restart resumes a hold time, a cycle or a budget
// where it was. Text written before the cost fields existed still reads (costs 0).
// Plain value; no I/O; any thread.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

#include "config/status.h"
#include "daemon/metering/reading.h"

namespace ampledger {

// Where a rule stands for one subject. The diagrams are in daemon/metering/alert_rule.h.
enum class AlertPhase : std::uint8_t {
  kCalm,      // nothing to report
  kHolding,   // the condition holds, its hold time has not yet passed (power, left_on)
  kRaised,    // an alert is active for this subject
  kRunning,   // cycle_done: the load is running
  kQuieting,  // cycle_done: the load went quiet; the cycle ends if it stays quiet long enough
};

// "calm", "holding", "raised", "running", "quieting".
const char* AlertPhaseName(AlertPhase phase);

struct AlertState {
  AlertPhase phase = AlertPhase::kCalm;
  // power_above/below: when the condition began; left_on: on since; cycle_done: the run's
  // start; budget: start of the period being counted.
  UnixMs since_ms = 0;
  UnixMs quiet_since_ms = 0;  // cycle_done: when the load went quiet
  // Power kinds: end of the newest sample used (older ones are ignored). node_silent: when
  // the node was last heard from (the commit time of its readings).
  UnixMs last_ms = 0;
  double energy_wh = 0;  // cycle_done: energy of the run so far; budget: energy in the period
  double tail_wh = 0;    // cycle_done: energy since the load went quiet
  // power_above, cycle_done: the highest power seen since the condition began; power_below:
  // the lowest; standby_creep: the lowest power seen in tonight's window.
  double extreme_w = 0;
  std::int64_t interval_ms = 0;  // node_silent: the node's reporting interval
  // standby_creep: nights in a row whose minimum was above the level.
  int count = 0;
  // budget: 0 within budget, 1 on course to exceed, 2 exceeded; left_on: 1 raised for the
  // time limit, 2 raised inside the window.
  int stage = 0;
  std::int64_t night = 0;    // standby_creep: local date (days since 1970) of tonight's window
  std::int64_t samples = 0;  // standby_creep: samples seen in tonight's window
  // Money in the site's currency (PowerSample::cost). cycle_done: the run's cost so far;
  // budget: the cost in the period.
  double cost = 0;
  double tail_cost = 0;  // cycle_done: the cost since the load went quiet

  bool operator==(const AlertState&) const = default;

  // "phase=raised since=1767225600000 quiet=0 last=... wh=... tail=... extreme=... ..."
  std::string Serialize() const;
  // Reads what Serialize() wrote, also without the trailing cost fields (states stored
  // before costs were kept). Corruption names the first field that does not read.
  static Result<AlertState> Parse(std::string_view text);
};

}  // namespace ampledger
