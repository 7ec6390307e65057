// daemon/metering/alert_rule.cpp
// The state machines drawn in alert_rule.h, one function per kind.
#include "daemon/metering/alert_rule.h"

#include <algorithm>
#include <cmath>

namespace ampledger {

namespace {

// "HH:MM" -> minutes after local midnight; the config reader has checked the form.
int ClockMinute(const std::string& text) {
  return ((text[0] - '0') * 10 + (text[1] - '0')) * 60 + (text[3] - '0') * 10 + (text[4] - '0');
}

double Seconds(UnixMs ms) { return static_cast<double>(ms) / kMsPerSecond; }
double AsValue(UnixMs ms) { return static_cast<double>(ms); }

std::int64_t DaysSinceEpoch(date::year_month_day day) {
  return date::sys_days{day}.time_since_epoch().count();
}

// An amount of money in whole micro-units, for comparing a cost with its budget.
std::int64_t WholeMicros(double amount) { return std::llround(amount * 1e6); }

}  // namespace

const char* AlertEventKindName(AlertEventKind kind) {
  switch (kind) {
    case AlertEventKind::kRaised: return "raised";
    case AlertEventKind::kChanged: return "changed";
    case AlertEventKind::kCleared: return "cleared";
    case AlertEventKind::kAcknowledged: return "acknowledged";
    case AlertEventKind::kSilenced: return "silenced";
    case AlertEventKind::kCycleFinished: return "cycle_finished";
    case AlertEventKind::kSilent: return "silent";
    case AlertEventKind::kBack: return "back";
  }
  return "raised";
}

bool EndsAlert(AlertEventKind kind) {
  return kind == AlertEventKind::kCleared || kind == AlertEventKind::kBack;
}

bool StartsAlert(AlertEventKind kind) {
  return kind == AlertEventKind::kRaised || kind == AlertEventKind::kSilent;
}

std::optional<double> AlertTransition::Value(const std::string& name) const {
  for (const AlertValue& value : values) {
    if (value.name == name) return value.value;
  }
  return std::nullopt;
}

Result<AlertRule> AlertRule::Create(const AlertRuleConfig& config, const AlertSite& site) {
  if (config.kind == AlertKind::kBudget && config.budget_cost > 0 && !site.priced) {
    return Status::InvalidArgument("alert \"" + config.id +
                                   "\": budget_cost needs a site tariff to price energy");
  }
  return AlertRule(config, site);
}

AlertRule::AlertRule(const AlertRuleConfig& config, const AlertSite& site)
    : config_(config),
      site_(site),
      hold_ms_(std::llround(config.hold_seconds * kMsPerSecond)),
      quiet_ms_(std::llround(config.quiet_seconds * kMsPerSecond)),
      min_run_ms_(std::llround(config.min_run_seconds * kMsPerSecond)) {
  if (!config.window_start.empty()) {
    window_start_minute_ = ClockMinute(config.window_start);
    window_end_minute_ = ClockMinute(config.window_end);
  }
}

void AlertRule::OnSample(const PowerSample& sample, AlertState* state,
                         std::vector<AlertTransition>* out) const {
  if (config_.kind == AlertKind::kBudget) {
    OnBudgetSample(sample, state, out);
    return;
  }
  if (config_.kind == AlertKind::kNodeSilent || sample.end_ms <= state->last_ms) return;
  switch (config_.kind) {
    case AlertKind::kPowerAbove:
    case AlertKind::kPowerBelow: OnLevelSample(sample, state, out); break;
    case AlertKind::kCycleDone: OnCycleSample(sample, state, out); break;
    case AlertKind::kLeftOn: OnLeftOnSample(sample, state, out); break;
    case AlertKind::kStandbyCreep: OnCreepSample(sample, state, out); break;
    case AlertKind::kBudget:
    case AlertKind::kNodeSilent: break;
  }
  state->last_ms = sample.end_ms;
}

void AlertRule::OnLevelSample(const PowerSample& sample, AlertState* state,
                              std::vector<AlertTransition>* out) const {
  const bool below = config_.kind == AlertKind::kPowerBelow;
  const double w = sample.watts;
  const bool beyond_level = below ? w < config_.level_watts : w > config_.level_watts;
  const bool past_clear = below ? w > config_.clear_watts : w < config_.clear_watts;
  const char* extreme_name = below ? "lowest_watts" : "peak_watts";
  auto more_extreme = [below](double a, double b) { return below ? std::min(a, b)
                                                                 : std::max(a, b); };
  const bool gap = state->last_ms > 0 && sample.start_ms() - state->last_ms > site_.max_gap_ms;

  if (state->phase == AlertPhase::kRaised) {
    state->extreme_w = more_extreme(state->extreme_w, w);
    if (past_clear) {
      out->push_back({AlertEventKind::kCleared, sample.end_ms, below ? "above clear level"
                                                                     : "below clear level",
                      {{"watts", w},
                       {"clear_watts", config_.clear_watts},
                       {extreme_name, state->extreme_w},
                       {"since", AsValue(state->since_ms)},
                       {"lasted_s", Seconds(sample.end_ms - state->since_ms)}}});
      *state = AlertState{};
    }
    return;
  }
  if (!beyond_level) {
    state->phase = AlertPhase::kCalm;
    return;
  }
  if (state->phase != AlertPhase::kHolding || gap) {
    state->phase = AlertPhase::kHolding;
    state->since_ms = sample.start_ms();
    state->extreme_w = w;
  }
  state->extreme_w = more_extreme(state->extreme_w, w);
  const UnixMs held = sample.end_ms - state->since_ms;
  if (held >= hold_ms_) {
    state->phase = AlertPhase::kRaised;
    out->push_back({AlertEventKind::kRaised, sample.end_ms, below ? "below level" : "above level",
                    {{"watts", w},
                     {"level_watts", config_.level_watts},
                     {extreme_name, state->extreme_w},
                     {"since", AsValue(state->since_ms)},
                     {"held_s", Seconds(held)}}});
  }
}

void AlertRule::OnCycleSample(const PowerSample& sample, AlertState* state,
                              std::vector<AlertTransition>* out) const {
  const double w = sample.watts;
  switch (state->phase) {
    case AlertPhase::kCalm:
    case AlertPhase::kHolding:
    case AlertPhase::kRaised:
      if (w > config_.level_watts) {
        *state = AlertState{};
        state->phase = AlertPhase::kRunning;
        state->since_ms = sample.start_ms();
        state->energy_wh = sample.energy_wh;
        state->cost = sample.cost;
        state->extreme_w = w;
      }
      return;
    case AlertPhase::kRunning:
      if (w >= config_.clear_watts) {
        state->energy_wh += sample.energy_wh;
        state->cost += sample.cost;
        state->extreme_w = std::max(state->extreme_w, w);
        return;
      }
      state->phase = AlertPhase::kQuieting;
      state->quiet_since_ms = sample.start_ms();
      state->tail_wh = sample.energy_wh;
      state->tail_cost = sample.cost;
      break;
    case AlertPhase::kQuieting:
      if (w >= config_.clear_watts) {
        // A dip shorter than quiet_seconds (a pause between drum turns) does not end the run.
        state->phase = AlertPhase::kRunning;
        state->energy_wh += state->tail_wh + sample.energy_wh;
        state->cost += state->tail_cost + sample.cost;
        state->tail_wh = 0;
        state->tail_cost = 0;
        state->extreme_w = std::max(state->extreme_w, w);
        return;
      }
      state->tail_wh += sample.energy_wh;
      state->tail_cost += sample.cost;
      break;
  }
  if (sample.end_ms - state->quiet_since_ms < quiet_ms_) return;
  const UnixMs run_ms = state->quiet_since_ms - state->since_ms;
  if (run_ms >= min_run_ms_) {
    AlertTransition finished{AlertEventKind::kCycleFinished, sample.end_ms, "quiet after a run",
                             {{"start", AsValue(state->since_ms)},
                              {"end", AsValue(state->quiet_since_ms)},
                              {"duration_s", Seconds(run_ms)},
                              {"energy_wh", state->energy_wh},
                              {"peak_watts", state->extreme_w}}};
    if (site_.priced) finished.values.push_back({"cost", state->cost});
    out->push_back(std::move(finished));
  }
  *state = AlertState{};
}

bool AlertRule::InWindow(UnixMs instant) const {
  if (window_start_minute_ < 0) return false;
  const int minute = site_.local.At(instant).minute_of_day;
  if (window_start_minute_ < window_end_minute_) {
    return window_start_minute_ <= minute && minute < window_end_minute_;
  }
  return minute >= window_start_minute_ || minute < window_end_minute_;  // crosses midnight
}

void AlertRule::OnLeftOnSample(const PowerSample& sample, AlertState* state,
                               std::vector<AlertTransition>* out) const {
  const bool on = sample.watts > config_.level_watts;
  if (!on) {
    if (state->phase == AlertPhase::kRaised) {
      out->push_back({AlertEventKind::kCleared, sample.end_ms, "switched off",
                      {{"watts", sample.watts},
                       {"since", AsValue(state->since_ms)},
                       {"on_for_s", Seconds(sample.start_ms() - state->since_ms)}}});
    }
    *state = AlertState{};
    return;
  }
  const bool gap = state->last_ms > 0 && sample.start_ms() - state->last_ms > site_.max_gap_ms;
  if (state->phase == AlertPhase::kCalm || (state->phase == AlertPhase::kHolding && gap)) {
    state->phase = AlertPhase::kHolding;
    state->since_ms = sample.start_ms();
  }
  if (state->phase != AlertPhase::kHolding) return;
  const UnixMs on_for = sample.end_ms - state->since_ms;
  const bool too_long = hold_ms_ > 0 && on_for >= hold_ms_;
  // The sample's first and last instants: either inside the window counts.
  const bool in_window = InWindow(sample.start_ms()) || InWindow(sample.end_ms - 1);
  if (!too_long && !in_window) return;
  state->phase = AlertPhase::kRaised;
  state->stage = too_long ? 1 : 2;
  out->push_back({AlertEventKind::kRaised, sample.end_ms,
                  too_long ? "on longer than the limit" : "on inside the window",
                  {{"watts", sample.watts},
                   {"level_watts", config_.level_watts},
                   {"since", AsValue(state->since_ms)},
                   {"on_for_s", Seconds(on_for)}}});
}

void AlertRule::EndNight(UnixMs at_ms, AlertState* state,
                         std::vector<AlertTransition>* out) const {
  const double minimum = state->extreme_w;
  state->samples = 0;
  if (minimum > config_.level_watts) {
    ++state->count;
    if (state->count >= config_.nights && state->phase != AlertPhase::kRaised) {
      state->phase = AlertPhase::kRaised;
      out->push_back({AlertEventKind::kRaised, at_ms, "overnight minimum above level",
                      {{"night_min_watts", minimum},
                       {"level_watts", config_.level_watts},
                       {"nights", static_cast<double>(state->count)}}});
    }
    return;
  }
  state->count = 0;
  if (state->phase == AlertPhase::kRaised) {
    state->phase = AlertPhase::kCalm;
    out->push_back({AlertEventKind::kCleared, at_ms, "overnight minimum at or below level",
                    {{"night_min_watts", minimum}, {"level_watts", config_.level_watts}}});
  }
}

void AlertRule::OnCreepSample(const PowerSample& sample, AlertState* state,
                              std::vector<AlertTransition>* out) const {
  const LocalMoment moment = site_.local.At(sample.end_ms - 1);
  const std::int64_t day = DaysSinceEpoch(moment.date);
  const bool in_night =
      kNightStartMinute <= moment.minute_of_day && moment.minute_of_day < kNightEndMinute;
  if (state->samples > 0 && (day != state->night || moment.minute_of_day >= kNightEndMinute)) {
    EndNight(sample.end_ms, state, out);
  }
  if (!in_night) return;
  if (state->samples == 0) {
    state->night = day;
    state->extreme_w = sample.watts;
  }
  ++state->samples;
  state->extreme_w = std::min(state->extreme_w, sample.watts);
}

Result<TimeRange> AlertRule::BudgetPeriod(UnixMs instant) const {
  if (config_.budget_period == "cycle") {
    Result<BillingCycle> cycle = site_.local.CycleContaining(site_.billing_cycle_day, instant);
    if (!cycle.ok()) return cycle.status();
    return cycle->range;
  }
  const LocalMoment moment = site_.local.At(instant);
  if (config_.budget_period == "day") return site_.local.Day(moment.date);
  // ISO 8601 weeks start on Monday.
  const date::sys_days monday =
      date::sys_days{moment.date} - (moment.weekday - date::Monday);
  Result<TimeRange> first = site_.local.Day(date::year_month_day{monday});
  Result<TimeRange> next = site_.local.Day(date::year_month_day{monday + date::days{7}});
  if (!first.ok()) return first.status();
  if (!next.ok()) return next.status();
  return TimeRange{first->start_ms, next->start_ms};
}

void AlertRule::OnBudgetSample(const PowerSample& sample, AlertState* state,
                               std::vector<AlertTransition>* out) const {
  // A sample ending exactly at midnight belongs to the day it measured.
  Result<TimeRange> period = BudgetPeriod(sample.end_ms - 1);
  if (!period.ok()) return;
  if (period->start_ms < state->since_ms) return;  // late energy of a period already closed
  if (period->start_ms > state->since_ms) {
    OnTick(period->start_ms, state, out);
    *state = AlertState{};
    state->since_ms = period->start_ms;
  }
  state->energy_wh += sample.energy_wh;
  state->cost += sample.cost;
  state->last_ms = std::max(state->last_ms, sample.end_ms);
  const double elapsed = static_cast<double>(state->last_ms - period->start_ms);
  const double length = static_cast<double>(period->DurationMs());
  const bool by_cost = config_.budget_cost > 0;
  const double used = by_cost ? state->cost : state->energy_wh / 1000;
  const double budget = by_cost ? config_.budget_cost : config_.budget_kwh;
  const double projected = elapsed > 0 ? used * length / elapsed : 0;
  // Energy is compared as it is; money to the micro-unit (alert_rule.h says why).
  auto over = [by_cost](double amount, double limit) {
    return by_cost ? WholeMicros(amount) > WholeMicros(limit) : amount > limit;
  };
  int stage = 0;
  if (over(used, budget)) {
    stage = 2;
  } else if (elapsed >= kBudgetProjectionFromFraction * length && over(projected, budget)) {
    stage = 1;
  }
  if (stage <= state->stage) return;  // within a period a budget only gets worse
  std::vector<AlertValue> values;
  if (by_cost) {
    values = {{"used_cost", used},
              {"budget_cost", budget},
              {"projected_cost", projected},
              {"used_kwh", state->energy_wh / 1000}};
  } else {
    values = {{"used_kwh", used}, {"budget_kwh", budget}, {"projected_kwh", projected}};
  }
  values.push_back({"period_start", AsValue(period->start_ms)});
  values.push_back({"period_end", AsValue(period->end_ms)});
  out->push_back({state->phase == AlertPhase::kRaised ? AlertEventKind::kChanged
                                                      : AlertEventKind::kRaised,
                  sample.end_ms, stage == 2 ? "budget exceeded" : "on course to exceed",
                  std::move(values)});
  state->phase = AlertPhase::kRaised;
  state->stage = stage;
}

void AlertRule::OnHeard(UnixMs now, std::int64_t interval_ms, AlertState* state,
                        std::vector<AlertTransition>* out) const {
  if (config_.kind != AlertKind::kNodeSilent) return;
  if (state->phase == AlertPhase::kRaised) {
    out->push_back({AlertEventKind::kBack, now, "reporting again",
                    {{"last_heard", AsValue(state->last_ms)},
                     {"silent_for_s", Seconds(now - state->last_ms)}}});
    state->phase = AlertPhase::kCalm;
  }
  state->last_ms = std::max(state->last_ms, now);
  if (interval_ms > 0) state->interval_ms = interval_ms;
}

std::optional<UnixMs> AlertRule::NextDeadline(const AlertState& state) const {
  if (config_.kind == AlertKind::kNodeSilent) {
    if (state.phase == AlertPhase::kRaised || state.last_ms == 0 || state.interval_ms <= 0) {
      return std::nullopt;
    }
    // Silent once strictly more than missed_intervals intervals have passed.
    return state.last_ms + config_.missed_intervals * state.interval_ms + 1;
  }
  if (config_.kind == AlertKind::kBudget && state.phase == AlertPhase::kRaised) {
    Result<TimeRange> period = BudgetPeriod(state.since_ms);
    if (period.ok()) return period->end_ms;
  }
  return std::nullopt;
}

void AlertRule::OnTick(UnixMs now, AlertState* state, std::vector<AlertTransition>* out) const {
  std::optional<UnixMs> deadline = NextDeadline(*state);
  if (!deadline || now < *deadline) return;
  if (config_.kind == AlertKind::kNodeSilent) {
    state->phase = AlertPhase::kRaised;
    out->push_back({AlertEventKind::kSilent, now, "no readings",
                    {{"last_heard", AsValue(state->last_ms)},
                     {"interval_s", Seconds(state->interval_ms)},
                     {"missed_intervals", static_cast<double>(config_.missed_intervals)}}});
    return;
  }
  if (config_.budget_cost > 0) {
    out->push_back({AlertEventKind::kCleared, *deadline, "budget period ended",
                    {{"used_cost", state->cost},
                     {"budget_cost", config_.budget_cost},
                     {"used_kwh", state->energy_wh / 1000},
                     {"period_end", AsValue(*deadline)}}});
  } else {
    out->push_back({AlertEventKind::kCleared, *deadline, "budget period ended",
                    {{"used_kwh", state->energy_wh / 1000},
                     {"budget_kwh", config_.budget_kwh},
                     {"period_end", AsValue(*deadline)}}});
  }
  // Counting starts again with the next period; late energy of the ended one is not counted.
  *state = AlertState{};
  state->since_ms = *deadline;
}

}  // namespace ampledger
