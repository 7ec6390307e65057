// daemon/metering/alert_evaluator.cpp
#include "daemon/metering/alert_evaluator.h"

#include <algorithm>
#include <map>

namespace ampledger {

namespace {

// A reading's energy as mean power x duration, in Wh.
double ReadingWh(const ChannelReading& reading) {
  return reading.real_watts * reading.duration_ms / (3600.0 * kMsPerSecond);
}

// Whether a rule uses the cost of its samples.
bool UsesCost(const AlertRuleConfig& rule) {
  return rule.kind == AlertKind::kCycleDone ||
         (rule.kind == AlertKind::kBudget && rule.budget_cost > 0);
}

}  // namespace

Result<AlertEvaluator> AlertEvaluator::Create(const Config& config,
                                             const TariffSchedule* tariffs) {
  Result<LocalTime> local = LocalTime::ForZone(config.site.time_zone);
  if (!local.ok()) return local.status();
  const bool priced = tariffs != nullptr && !tariffs->empty();
  AlertSite site{*local, config.site.billing_cycle_day,
                 static_cast<UnixMs>(config.site.max_gap_seconds * kMsPerSecond), priced};
  AlertEvaluator evaluator(config);
  if (priced) evaluator.pricer_.emplace(*tariffs, *local);
  evaluator.circuit_priced_.assign(config.circuits.size(), false);
  for (size_t r = 0; r < config.alerts.size(); ++r) {
    const AlertRuleConfig& rule_config = config.alerts[r];
    Result<AlertRule> rule = AlertRule::Create(rule_config, site);
    if (!rule.ok()) return rule.status();
    evaluator.rules_.push_back(*rule);
    std::vector<std::string> subjects;
    for (const std::string& id : rule_config.circuits) subjects.push_back("circuit:" + id);
    for (const std::string& id : rule_config.units) subjects.push_back("unit:" + id);
    if (rule_config.kind == AlertKind::kNodeSilent) {
      if (rule_config.nodes.empty()) {
        for (const NodeConfig& node : config.nodes) subjects.push_back("node:" + node.id);
      }
      for (const std::string& id : rule_config.nodes) subjects.push_back("node:" + id);
    }
    for (std::string& subject : subjects) {
      evaluator.slots_of_subject_[subject].push_back(static_cast<int>(evaluator.slots_.size()));
      evaluator.slots_.push_back(AlertSlot{static_cast<int>(r), std::move(subject), {}});
    }
  }
  evaluator.changed_.assign(evaluator.slots_.size(), false);
  evaluator.fed_at_.assign(evaluator.slots_.size(), 0);
  evaluator.unit_of_circuit_.assign(config.circuits.size(), -1);
  for (size_t u = 0; u < config.units.size(); ++u) {
    for (const std::string& id : config.units[u].circuits) {
      int circuit = config.FindCircuitIndex(id);
      if (circuit >= 0) evaluator.unit_of_circuit_[circuit] = static_cast<int>(u);
    }
  }
  auto price_circuit = [&](const std::string& id) {
    const int circuit = config.FindCircuitIndex(id);
    if (circuit >= 0) evaluator.circuit_priced_[circuit] = true;
  };
  for (const AlertRuleConfig& rule_config : config.alerts) {
    if (!priced || !UsesCost(rule_config)) continue;
    for (const std::string& id : rule_config.circuits) price_circuit(id);
    for (const std::string& id : rule_config.units) {
      const UnitConfig* unit = config.FindUnit(id);
      if (unit == nullptr) continue;
      for (const std::string& circuit : unit->circuits) price_circuit(circuit);
    }
  }
  evaluator.channel_watts_.assign(config.ChannelCount(), 0);
  evaluator.circuit_watts_.assign(config.circuits.size(), 0);
  return evaluator;
}

bool AlertEvaluator::Restore(const std::string& rule, const std::string& subject,
                             const AlertState& state) {
  auto found = slots_of_subject_.find(subject);
  if (found == slots_of_subject_.end()) return false;
  for (int slot : found->second) {
    if (config_->alerts[slots_[slot].rule].id == rule) {
      slots_[slot].state = state;
      return true;
    }
  }
  return false;
}

void AlertEvaluator::Record(int slot, const AlertState& before,
                            std::vector<AlertTransition>& transitions,
                            std::vector<AlertOutcome>* out) {
  if (!(slots_[slot].state == before)) changed_[slot] = true;
  for (AlertTransition& transition : transitions) {
    const AlertSlot& entry = slots_[slot];
    out->push_back({slot, config_->alerts[entry.rule].id, entry.subject, std::move(transition)});
  }
  transitions.clear();
}

void AlertEvaluator::Feed(const std::string& subject, const PowerSample& sample, UnixMs now,
                          std::vector<AlertOutcome>* out) {
  auto found = slots_of_subject_.find(subject);
  if (found == slots_of_subject_.end()) return;
  std::vector<AlertTransition> transitions;
  for (int slot : found->second) {
    fed_at_[slot] = now;
    const AlertState before = slots_[slot].state;
    rules_[slots_[slot].rule].OnSample(sample, &slots_[slot].state, &transitions);
    Record(slot, before, transitions, out);
  }
}

void AlertEvaluator::Resume(UnixMs now) {
  for (size_t slot = 0; slot < slots_.size(); ++slot) {
    AlertState& state = slots_[slot].state;
    if (rules_[slots_[slot].rule].kind() != AlertKind::kNodeSilent) continue;
    if (state.phase == AlertPhase::kRaised || state.last_ms == 0 || state.last_ms >= now) {
      continue;
    }
    state.last_ms = now;
    changed_[slot] = true;
  }
}

void AlertEvaluator::OnReadings(const std::vector<ChannelReading>& readings, UnixMs now,
                                std::vector<AlertOutcome>* out) {
  std::vector<const ChannelReading*> ordered;
  for (const ChannelReading& reading : readings) {
    if (reading.channel >= 0 && reading.channel < config_->ChannelCount()) {
      ordered.push_back(&reading);
    }
  }
  std::stable_sort(ordered.begin(), ordered.end(),
                   [](const ChannelReading* a, const ChannelReading* b) {
                     return a->end_ms < b->end_ms;
                   });
  std::map<int, std::int64_t> heard;  // node index -> its longest reading interval
  for (size_t begin = 0; begin < ordered.size();) {
    // All readings that end at one instant, then one sample per circuit and unit touched.
    const UnixMs end_ms = ordered[begin]->end_ms;
    std::map<int, PowerSample> circuits;  // by circuit index
    size_t next = begin;
    for (; next < ordered.size() && ordered[next]->end_ms == end_ms; ++next) {
      const ChannelReading& reading = *ordered[next];
      channel_watts_[reading.channel] = reading.real_watts;
      std::int64_t& interval = heard[config_->NodeOfChannel(reading.channel)];
      interval = std::max<std::int64_t>(interval, reading.duration_ms);
      const int circuit = config_->CircuitOfChannel(reading.channel);
      if (circuit < 0) continue;
      PowerSample& sample = circuits[circuit];
      sample.end_ms = end_ms;
      sample.duration_ms = std::max(sample.duration_ms, reading.duration_ms);
      sample.energy_wh += ReadingWh(reading);
      if (circuit_priced_[circuit]) {
        sample.cost += pricer_->Cost(reading.end_ms - reading.duration_ms, reading.end_ms,
                                     ReadingWh(reading));
      }
    }
    begin = next;
    std::map<int, PowerSample> units;
    for (auto& [circuit, sample] : circuits) {
      double watts = 0;
      for (int channel : config_->ChannelsOfCircuit(circuit)) watts += channel_watts_[channel];
      circuit_watts_[circuit] = watts;
      sample.watts = watts;
      const int unit = unit_of_circuit_[circuit];
      if (unit < 0) continue;
      PowerSample& unit_sample = units[unit];
      unit_sample.end_ms = end_ms;
      unit_sample.duration_ms = std::max(unit_sample.duration_ms, sample.duration_ms);
      unit_sample.energy_wh += sample.energy_wh;
      unit_sample.cost += sample.cost;
    }
    for (const auto& [circuit, sample] : circuits) {
      Feed("circuit:" + config_->circuits[circuit].id, sample, now, out);
    }
    for (auto& [unit, sample] : units) {
      for (size_t c = 0; c < unit_of_circuit_.size(); ++c) {
        if (unit_of_circuit_[c] == unit) sample.watts += circuit_watts_[c];
      }
      Feed("unit:" + config_->units[unit].id, sample, now, out);
    }
  }
  std::vector<AlertTransition> transitions;
  for (const auto& [node, interval] : heard) {
    auto found = slots_of_subject_.find("node:" + config_->nodes[node].id);
    if (found == slots_of_subject_.end()) continue;
    for (int slot : found->second) {
      const AlertState before = slots_[slot].state;
      rules_[slots_[slot].rule].OnHeard(now, interval, &slots_[slot].state, &transitions);
      Record(slot, before, transitions, out);
    }
  }
}

void AlertEvaluator::OnTick(UnixMs now, std::vector<AlertOutcome>* out) {
  std::vector<AlertTransition> transitions;
  for (size_t slot = 0; slot < slots_.size(); ++slot) {
    std::optional<UnixMs> deadline = SlotDeadline(slot);
    if (!deadline || now < *deadline) continue;
    const AlertState before = slots_[slot].state;
    rules_[slots_[slot].rule].OnTick(now, &slots_[slot].state, &transitions);
    Record(static_cast<int>(slot), before, transitions, out);
  }
}

std::optional<UnixMs> AlertEvaluator::SlotDeadline(size_t slot) const {
  const AlertRule& rule = rules_[slots_[slot].rule];
  std::optional<UnixMs> deadline = rule.NextDeadline(slots_[slot].state);
  if (deadline && rule.kind() == AlertKind::kBudget && fed_at_[slot] > 0) {
    deadline = std::max(*deadline, fed_at_[slot] + kBudgetQuietMs);
  }
  return deadline;
}

std::optional<UnixMs> AlertEvaluator::NextDeadline() const {
  std::optional<UnixMs> earliest;
  for (size_t slot = 0; slot < slots_.size(); ++slot) {
    std::optional<UnixMs> deadline = SlotDeadline(slot);
    if (deadline && (!earliest || *deadline < *earliest)) earliest = deadline;
  }
  return earliest;
}

std::vector<int> AlertEvaluator::TakeChanged() {
  std::vector<int> changed;
  for (size_t slot = 0; slot < changed_.size(); ++slot) {
    if (changed_[slot]) changed.push_back(static_cast<int>(slot));
  }
  changed_.assign(changed_.size(), false);
  return changed;
}

}  // namespace ampledger
