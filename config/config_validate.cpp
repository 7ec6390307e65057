// config/config_validate.cpp
#include "config/config_validate.h"

#include <map>

namespace ampledger {

namespace {

std::string Quote(const std::string& text) {
  return "\"" + text + "\"";
}

std::string Indexed(const std::string& path, size_t index) {
  return path + "[" + std::to_string(index) + "]";
}

// Checks that the ids of the `items` at `path` are unique; `noun` is "node", "circuit", ...
template <typename T>
Status CheckUniqueIds(const std::vector<T>& items, const std::string& noun, const std::string& path,
                      const KeyLines& lines, const std::string& scope = "") {
  std::map<std::string, size_t> first;
  for (size_t i = 0; i < items.size(); ++i) {
    auto [it, added] = first.emplace(items[i].id, i);
    if (!added) {
      return lines.Error(Indexed(path, i) + ".id",
                         "duplicate " + noun + " id " + Quote(items[i].id) + scope +
                             ", first used by " + Indexed(path, it->second));
    }
  }
  return Status::Ok();
}

class Validator {
 public:
  Validator(const Config& config, const KeyLines& lines) : config_(config), lines_(lines) {}

  Status Run() {
    Status s = CheckIds();
    if (s.ok()) s = CheckCircuits();
    if (s.ok()) s = CheckUnits();
    if (s.ok()) s = CheckShared();
    if (s.ok() && config_.remainder) s = CheckSplit(*config_.remainder, "remainder");
    if (s.ok()) s = CheckAlerts();
    if (s.ok()) s = CheckResendHorizon();
    return s;
  }

 private:
  Status CheckIds() {
    Status s = CheckUniqueIds(config_.nodes, "node", "node", lines_);
    for (size_t n = 0; n < config_.nodes.size() && s.ok(); ++n) {
      s = CheckUniqueIds(config_.nodes[n].channels, "channel", Indexed("node", n) + ".channel",
                         lines_, " on node " + Quote(config_.nodes[n].id));
    }
    if (s.ok()) s = CheckUniqueIds(config_.circuits, "circuit", "circuit", lines_);
    if (s.ok()) s = CheckUniqueIds(config_.units, "unit", "unit", lines_);
    if (s.ok()) s = CheckUniqueIds(config_.alerts, "alert", "alert", lines_);
    if (s.ok()) s = CheckUniqueIds(config_.webhooks, "webhook", "webhook", lines_);
    return s;
  }

  // "" when `ref` names a configured channel, else what is wrong.
  std::string MissingChannel(const ChannelRef& ref) const {
    const NodeConfig* node = config_.FindNode(ref.node);
    if (node == nullptr) return "no node " + Quote(ref.node);
    for (const ChannelConfig& channel : node->channels) {
      if (channel.id == ref.channel) return "";
    }
    return "no channel " + Quote(ref.channel) + " on node " + Quote(ref.node);
  }

  Status CheckCircuits() {
    std::map<std::string, std::string> fed_by;  // "node/channel" -> circuit id
    for (size_t i = 0; i < config_.circuits.size(); ++i) {
      const CircuitConfig& circuit = config_.circuits[i];
      const std::string path = Indexed("circuit", i);
      for (size_t c = 0; c < circuit.channels.size(); ++c) {
        const std::string where = Indexed(path + ".channels", c);
        std::string missing = MissingChannel(circuit.channels[c]);
        if (!missing.empty()) return lines_.Error(where, missing);
        auto [it, added] = fed_by.emplace(circuit.channels[c].ToString(), circuit.id);
        if (!added) {
          return lines_.Error(
              where, "channel " + Quote(it->first) + " already feeds circuit " + Quote(it->second));
        }
      }
      if (circuit.voltage_from) {
        std::string missing = MissingChannel(*circuit.voltage_from);
        if (!missing.empty()) return lines_.Error(path + ".voltage_from", missing);
      }
    }
    return Status::Ok();
  }

  Status CheckUnits() {
    for (size_t u = 0; u < config_.units.size(); ++u) {
      const UnitConfig& unit = config_.units[u];
      for (size_t c = 0; c < unit.circuits.size(); ++c) {
        const std::string where = Indexed(Indexed("unit", u) + ".circuits", c);
        const std::string& id = unit.circuits[c];
        if (config_.FindCircuit(id) == nullptr) {
          return lines_.Error(where, "no circuit " + Quote(id));
        }
        auto [it, added] = owner_.emplace(id, unit.id);
        if (!added) {
          return lines_.Error(where, it->second == unit.id
                                         ? "circuit " + Quote(id) + " is listed twice"
                                         : "circuit " + Quote(id) + " already belongs to unit " +
                                               Quote(it->second));
        }
      }
    }
    return Status::Ok();
  }

  Status CheckShared() {
    std::map<std::string, size_t> shared_by;  // circuit id -> index in config_.shared
    for (size_t i = 0; i < config_.shared.size(); ++i) {
      const SharedCircuitConfig& shared = config_.shared[i];
      const std::string path = Indexed("shared", i);
      const std::string where = path + ".circuit";
      const std::string& id = shared.circuit;
      if (config_.FindCircuit(id) == nullptr) return lines_.Error(where, "no circuit " + Quote(id));
      auto owner = owner_.find(id);
      if (owner != owner_.end()) {
        return lines_.Error(where, "circuit " + Quote(id) + " belongs to unit " +
                                       Quote(owner->second) +
                                       "; a circuit is owned by one unit or shared, not both");
      }
      auto [it, added] = shared_by.emplace(id, i);
      if (!added) {
        return lines_.Error(where, "circuit " + Quote(id) + " is already shared by " +
                                       Indexed("shared", it->second));
      }
      Status s = CheckSplit(shared.split, path);
      if (!s.ok()) return s;
    }
    return Status::Ok();
  }

  Status CheckSplit(const ShareConfig& split, const std::string& path) {
    if (split.units.empty() && config_.units.empty()) {
      return lines_.Error(path + ".units", "no units to share among; the file has no [[unit]]");
    }
    std::map<std::string, bool> seen;
    for (size_t u = 0; u < split.units.size(); ++u) {
      const std::string where = Indexed(path + ".units", u);
      const std::string& id = split.units[u];
      if (config_.FindUnit(id) == nullptr) return lines_.Error(where, "no unit " + Quote(id));
      if (!seen.emplace(id, true).second) {
        return lines_.Error(where, "unit " + Quote(id) + " is listed twice");
      }
    }
    return Status::Ok();
  }

  Status CheckAlerts() {
    for (size_t i = 0; i < config_.alerts.size(); ++i) {
      const AlertRuleConfig& alert = config_.alerts[i];
      const std::string path = Indexed("alert", i);
      Status s = CheckNames(alert.circuits, path + ".circuits", "circuit",
                            [&](const std::string& id) { return config_.FindCircuit(id); });
      if (s.ok()) {
        s = CheckNames(alert.units, path + ".units", "unit",
                       [&](const std::string& id) { return config_.FindUnit(id); });
      }
      if (s.ok()) {
        s = CheckNames(alert.nodes, path + ".nodes", "node",
                       [&](const std::string& id) { return config_.FindNode(id); });
      }
      if (s.ok() && alert.budget_cost > 0 && config_.site.tariff.empty()) {
        s = lines_.Error(path + ".budget_cost",
                         "needs site.tariff, whose prices cost the energy; set site.tariff or "
                         "use budget_kwh");
      }
      if (!s.ok()) return s;
    }
    return Status::Ok();
  }

  Status CheckResendHorizon() {
    const double retention_seconds = config_.storage.raw_retention_days * 86400.0;
    if (config_.ingest.resend_horizon_seconds <= retention_seconds) return Status::Ok();
    return lines_.Error("ingest.resend_horizon_seconds",
                        "expected at most storage.raw_retention_days (" +
                            std::to_string(config_.storage.raw_retention_days) +
                            " days = " + std::to_string(static_cast<long long>(retention_seconds)) +
                            " s), or retention would delete resent readings as they arrive");
  }

  template <typename Find>
  Status CheckNames(const std::vector<std::string>& ids, const std::string& path,
                    const std::string& what, Find find) {
    for (size_t i = 0; i < ids.size(); ++i) {
      if (find(ids[i]) == nullptr) {
        return lines_.Error(Indexed(path, i), "no " + what + " " + Quote(ids[i]));
      }
    }
    return Status::Ok();
  }

  const Config& config_;
  const KeyLines& lines_;
  std::map<std::string, std::string> owner_;  // circuit id -> owning unit id
};

}  // namespace

Status ValidateConfigReferences(const Config& config, const KeyLines& lines) {
  return Validator(config, lines).Run();
}

}  // namespace ampledger
