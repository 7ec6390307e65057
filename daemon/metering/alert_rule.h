// daemon/metering/alert_rule.h
// AlertRule: the logic of one configured alert rule ([[alert]], config/config.h), applied to
// one subject's AlertState at a time. The rule holds no per-subject state: the caller keeps an
// AlertState per (rule, subject), hands it in, and gets back what happened as transitions.
// Inputs are a subject's power samples (a circuit's summed channels, or a unit's summed
// circuits), "the node was heard from" for node_silent, and timer ticks. Pure: no I/O, no
// clock of its own; const methods, any thread.
//
// Levels are strict: power above `level_watts` means > level; a raised alert clears when the
// power is strictly below `clear_watts` (power_below: strictly above). A value in between
// changes nothing (the hysteresis band). Hold and quiet times are met at >= (a sample ending
// exactly hold_seconds after the condition began raises). A sample covers
// [end_ms - duration_ms, end_ms); a condition begins at the start of its first sample.
//
// power_above / power_below:
//   calm --over level--> holding --held hold_seconds--> raised --past clear level--> calm
//            holding --not over level--> calm     (a gap longer than max_gap restarts the hold)
// cycle_done (events only, never an active alert):
//   calm --above level--> running --below clear--> quieting --quiet for quiet_seconds--> calm
//                               ^------- at or above clear ------/  (emits cycle_finished if
//                                                                    the run lasted min_run)
// left_on:
//   calm --above level--> holding --on for hold_seconds, or on inside the window--> raised
//   holding/raised --at or below level--> calm  (raised -> calm emits cleared)
// node_silent (its alert is active while the node is silent):
//   calm --tick: nothing heard for more than missed_intervals x interval--> raised (silent)
//   raised --heard--> calm (back)
// standby_creep: each night's minimum in the local window 01:00-05:00; raised after `nights`
//   nights in a row above the level, cleared by a night at or below it.
// budget (energy or cost): raised when the period's energy (budget_kwh) or cost (budget_cost)
//   is on course to exceed the budget (linear projection, once a tenth of the period has
//   passed), changed when it is exceeded, cleared when the period ends. Cost is the samples'
//   `cost`: the time-of-use energy charge, see PowerSample. Costs are compared with the
//   budget in whole micro-units (millionths of the currency unit, as daemon/metering/money.h),
//   so rounding noise in summing thousands of readings cannot tip a budget that is exactly
//   met: spent exactly the budget is not over it.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "config/config.h"
#include "config/status.h"
#include "daemon/metering/alert_state.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/reading.h"

namespace ampledger {

// What the rules need to know of the site.
struct AlertSite {
  LocalTime local;               // the site's zone: windows, nights and budget periods
  int billing_cycle_day = 1;     // budget_period = "cycle"
  UnixMs max_gap_ms = 300'000;   // a longer gap between samples breaks a hold
  // The samples carry their cost (the site has a tariff): cost budgets may be used, and
  // cycle_finished events give the run's cost.
  bool priced = false;
};

// One subject's mean power over [end_ms - duration_ms, end_ms), and the energy that the
// readings behind it add (for budgets: each stored reading counts once).
struct PowerSample {
  UnixMs end_ms = 0;
  std::int32_t duration_ms = 0;
  double watts = 0;
  double energy_wh = 0;
  // What `energy_wh` costs in the site's currency when AlertSite::priced: its time-of-use
  // energy charge under the tariff in force (daemon/metering/energy_pricer.h); else 0.
  double cost = 0;
  UnixMs start_ms() const { return end_ms - duration_ms; }
};

enum class AlertEventKind : std::uint8_t {
  kRaised,         // an alert became active
  kChanged,        // an active alert got worse (a budget went from on course to exceeded)
  kCleared,        // an active alert ended
  kAcknowledged,   // a person acknowledged an active alert (recorded by storage)
  kSilenced,       // a person silenced an alert's notifications for a time (storage)
  kCycleFinished,  // cycle_done: a run ended
  kSilent,         // node_silent: the node stopped reporting (its alert is active)
  kBack,           // node_silent: the node reports again (its alert ends)
};

// "raised", "changed", "cleared", "acknowledged", "silenced", "cycle_finished", "silent",
// "back".
const char* AlertEventKindName(AlertEventKind kind);
// Whether `kind` ends an active alert / makes one active.
bool EndsAlert(AlertEventKind kind);
bool StartsAlert(AlertEventKind kind);

// A named number in a transition: watts, times (ms since 1970), seconds, kWh.
struct AlertValue {
  std::string name;
  double value = 0;
  bool operator==(const AlertValue&) const = default;
};

struct AlertTransition {
  AlertEventKind kind = AlertEventKind::kRaised;
  UnixMs at_ms = 0;     // when it happened: the end of the sample that decided it, or the tick
  std::string reason;   // a few words: "above level", "on course to exceed", "inside window"
  std::vector<AlertValue> values;
  // The value named `name`, or nullopt.
  std::optional<double> Value(const std::string& name) const;
};

// The fixed night window of standby_creep, local wall clock: the small hours, when a home's
// base load is all that runs (common practice for reading standby load).
inline constexpr int kNightStartMinute = 1 * 60;
inline constexpr int kNightEndMinute = 5 * 60;
// budget: no projection before this fraction of the period has passed, so one early burst
// (a kettle at 00:05) does not project a day's budget away. Our choice.
inline constexpr double kBudgetProjectionFromFraction = 0.1;

class AlertRule {
 public:
  // `config` as LoadConfig validated it. InvalidArgument for a cost budget (budget_cost) on a
  // site whose samples are not priced (no tariff).
  static Result<AlertRule> Create(const AlertRuleConfig& config, const AlertSite& site);

  const AlertRuleConfig& config() const { return config_; }
  AlertKind kind() const { return config_.kind; }

  // A power sample of one subject. Samples ending at or before the newest one already used
  // are ignored by the power, cycle, left_on and standby_creep logic (a resent reading must
  // not rewind a hold); a budget still counts their energy when it falls in the period being
  // counted. Ignored by node_silent.
  void OnSample(const PowerSample& sample, AlertState* state,
                std::vector<AlertTransition>* out) const;

  // node_silent: the node's readings were stored at `now`; it reports every `interval_ms`
  // (0 = keep the interval known before). Ignored by the other kinds.
  void OnHeard(UnixMs now, std::int64_t interval_ms, AlertState* state,
               std::vector<AlertTransition>* out) const;

  // The passing of time: node_silent raises; a raised budget clears when its period ends.
  void OnTick(UnixMs now, AlertState* state, std::vector<AlertTransition>* out) const;

  // The earliest `now` at which OnTick could change `state`; nullopt when only a sample can.
  std::optional<UnixMs> NextDeadline(const AlertState& state) const;

  // The budget period (budget_period) that contains `instant`.
  Result<TimeRange> BudgetPeriod(UnixMs instant) const;

 private:
  AlertRule(const AlertRuleConfig& config, const AlertSite& site);

  void OnLevelSample(const PowerSample& sample, AlertState* state,
                     std::vector<AlertTransition>* out) const;
  void OnCycleSample(const PowerSample& sample, AlertState* state,
                     std::vector<AlertTransition>* out) const;
  void OnLeftOnSample(const PowerSample& sample, AlertState* state,
                      std::vector<AlertTransition>* out) const;
  void OnCreepSample(const PowerSample& sample, AlertState* state,
                     std::vector<AlertTransition>* out) const;
  void OnBudgetSample(const PowerSample& sample, AlertState* state,
                      std::vector<AlertTransition>* out) const;
  void EndNight(UnixMs at_ms, AlertState* state, std::vector<AlertTransition>* out) const;
  bool InWindow(UnixMs instant) const;

  AlertRuleConfig config_;
  AlertSite site_;
  UnixMs hold_ms_ = 0;
  UnixMs quiet_ms_ = 0;
  UnixMs min_run_ms_ = 0;
  int window_start_minute_ = -1;  // left_on; -1 = no window
  int window_end_minute_ = -1;
};

}  // namespace ampledger
