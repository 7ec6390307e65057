// daemon/metering/alert_evaluator.h
// AlertEvaluator applies every configured alert rule to every subject it names: it turns
// stored channel readings into per-circuit and per-unit power samples, tells node_silent rules
// which nodes were heard, runs timer ticks, and keeps one AlertState per (rule, subject).
// Pure: no I/O, no clock; the caller passes `now`. Not thread-safe: one owner thread
// (storage/alert_recorder.h calls it on the writer thread).
//
// A circuit's power is the sum of the newest reading of each of its channels; a unit's is the
// sum of its own circuits' newest power (shared circuits are not part of any unit). A sample is
// made for each circuit at each reading end time in a batch, and for its unit at the same
// time. Energy for budgets is each stored reading's mean power x duration, counted once.
// With a tariff schedule, each reading's energy is also priced (daemon/metering/energy_pricer.h)
// for the subjects of cost budgets and cycle_done rules; a unit's cost is its circuits' sum.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "config/config.h"
#include "config/status.h"
#include "daemon/metering/alert_rule.h"
#include "daemon/metering/alert_state.h"
#include "daemon/metering/energy_pricer.h"
#include "daemon/metering/reading.h"
#include "daemon/metering/tariff_schedule.h"

namespace ampledger {

// What happened to one (rule, subject).
struct AlertOutcome {
  int slot = 0;         // index into AlertEvaluator::slots()
  std::string rule;     // AlertRuleConfig::id
  std::string subject;  // "circuit:<id>", "unit:<id>" or "node:<id>"
  AlertTransition transition;
};

// One (rule, subject) pair and its state.
struct AlertSlot {
  int rule = 0;         // index into Config::alerts
  std::string subject;  // as AlertOutcome::subject
  AlertState state;
};

class AlertEvaluator {
 public:
  // Every rule of `config` for every subject it names (node_silent with no nodes: every
  // node). `tariffs` is the site's schedule (TariffSchedule::Create(config)); nullptr or empty
  // when the site has no tariff. `config` and `*tariffs` must outlive this. Errors: a rule
  // AlertRule::Create refuses (a cost budget without a tariff), or the site's time zone is
  // not in the tz database.
  static Result<AlertEvaluator> Create(const Config& config,
                                       const TariffSchedule* tariffs = nullptr);

  const std::vector<AlertSlot>& slots() const { return slots_; }
  const AlertRule& rule(int index) const { return rules_[index]; }

  // Puts back a stored state. False when the config no longer has this (rule, subject).
  bool Restore(const std::string& rule, const std::string& subject, const AlertState& state);

  // The daemon starts listening at `now` after being stopped: a node_silent rule counts a
  // node's silence from `now`, not from before the stop, unless the node was silent already
  // (a restart for an upgrade is not a silent node). Call after Restore().
  void Resume(UnixMs now);

  // Readings just stored (each once), committed at `now`. Appends what happened to `out`,
  // in time order per subject.
  void OnReadings(const std::vector<ChannelReading>& readings, UnixMs now,
                  std::vector<AlertOutcome>* out);

  // Timer work due at `now` (silent nodes, ended budget periods). A budget period is closed
  // by the first reading of a later period; the timer closes it only when its subject has
  // also had no reading stored for kBudgetQuietMs, so readings replayed or resent long after
  // their time (the demo's history, a node catching up) are counted in the period they
  // measured rather than arriving after the timer closed it.
  void OnTick(UnixMs now, std::vector<AlertOutcome>* out);
  static constexpr UnixMs kBudgetQuietMs = 2 * 60 * 1000;

  // The earliest time OnTick has work; nullopt when none is scheduled.
  std::optional<UnixMs> NextDeadline() const;

  // Indexes of the slots whose state changed since the last call, in order; clears the set.
  std::vector<int> TakeChanged();

 private:
  explicit AlertEvaluator(const Config& config) : config_(&config) {}
  void Feed(const std::string& subject, const PowerSample& sample, UnixMs now,
            std::vector<AlertOutcome>* out);
  // When the timer may act on `slot` (its rule's deadline, held back for budgets).
  std::optional<UnixMs> SlotDeadline(size_t slot) const;
  void Record(int slot, const AlertState& before, std::vector<AlertTransition>& transitions,
              std::vector<AlertOutcome>* out);

  const Config* config_;
  std::optional<EnergyPricer> pricer_;  // when the site has a tariff
  std::vector<bool> circuit_priced_;    // by circuit index: its readings' cost is wanted
  std::vector<AlertRule> rules_;
  std::vector<AlertSlot> slots_;
  std::vector<bool> changed_;
  std::vector<UnixMs> fed_at_;  // by slot: `now` of the last OnReadings that fed it (0: none)
  std::vector<int> unit_of_circuit_;        // by circuit index; -1 when no unit owns it
  std::vector<double> channel_watts_;       // newest reading's power, by flat channel index
  std::vector<double> circuit_watts_;       // newest summed power, by circuit index
  std::map<std::string, std::vector<int>, std::less<>> slots_of_subject_;
};

}  // namespace ampledger
