// config/config_describe.cpp
// DescribeConfig (config/config.h): what a config defines, one thing per line, for
// `ampledger check`. Node keys are reported only as present or absent.
#include <sstream>

#include "config/config.h"

namespace ampledger {

namespace {

std::string Number(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

std::string Join(const std::vector<std::string>& items, const std::string& separator = ", ") {
  std::string text;
  for (const std::string& item : items) text += (text.empty() ? "" : separator) + item;
  return text;
}

std::string Volts(const std::vector<double>& volts) {
  std::vector<std::string> parts;
  for (double v : volts) parts.push_back(Number(v));
  return Join(parts, "/") + " V";
}

std::string DescribeSplit(const ShareConfig& split) {
  std::string text = ShareRuleName(split.rule);
  if (split.units.empty()) return text + " among all units";
  if (split.rule != ShareRule::kFixed) return text + " among " + Join(split.units);
  double total = 0;
  for (double w : split.weights) total += w;
  std::vector<std::string> parts;
  for (size_t i = 0; i < split.units.size() && i < split.weights.size(); ++i) {
    std::ostringstream part;
    part.precision(3);
    part << split.units[i] << " " << 100 * split.weights[i] / total << "%";
    parts.push_back(part.str());
  }
  return text + ": " + Join(parts);
}

std::string DescribeAlert(const AlertRuleConfig& alert, const std::string& currency) {
  std::vector<std::string> subjects;
  for (const std::string& c : alert.circuits) subjects.push_back("circuit " + c);
  for (const std::string& u : alert.units) subjects.push_back("unit " + u);
  for (const std::string& n : alert.nodes) subjects.push_back("node " + n);
  std::string text = alert.id + ": " + AlertKindName(alert.kind) + " on ";
  text += subjects.empty() ? "every node" : Join(subjects);
  switch (alert.kind) {
    case AlertKind::kPowerAbove:
    case AlertKind::kPowerBelow:
    case AlertKind::kStandbyCreep:
    case AlertKind::kCycleDone:
    case AlertKind::kLeftOn: text += ", level " + Number(alert.level_watts) + " W"; break;
    case AlertKind::kBudget:
      text += alert.budget_kwh > 0 ? ", " + Number(alert.budget_kwh) + " kWh"
                                   : ", " + Number(alert.budget_cost) + " " + currency;
      text += " per " + alert.budget_period;
      break;
    case AlertKind::kNodeSilent:
      text += ", after " + std::to_string(alert.missed_intervals) + " missed intervals";
      break;
  }
  return text;
}

}  // namespace

std::string DescribeConfig(const Config& config) {
  std::ostringstream out;
  const SiteConfig& site = config.site;
  out << "site \"" << site.name << "\": " << site.time_zone << ", " << Volts(site.nominal_volts)
      << ", " << site.currency << ", billing cycle starts on day " << site.billing_cycle_day
      << ", tariff " << (site.tariff.empty() ? "none" : site.tariff) << "\n";
  if (!site.tariff.empty()) {
    auto title = [&](const std::string& name) {
      const TariffFile* file = config.FindTariff(name);
      return file == nullptr ? std::string() : " \"" + file->tariff.rates.name + "\"";
    };
    out << "tariffs (from " << site.tariff_dir << "):\n";
    out << "  " << site.tariff << title(site.tariff) << "\n";
    for (const TariffChange& change : site.tariff_changes) {
      out << "  from " << date::format("%F", date::sys_days{change.from}) << ": "
          << change.tariff << title(change.tariff) << "\n";
    }
  }

  out << "nodes (" << config.nodes.size() << "):\n";
  for (const NodeConfig& node : config.nodes) {
    out << "  " << node.id << ": " << node.channels.size() << " channel"
        << (node.channels.size() == 1 ? "" : "s") << ", auth " << AuthModeName(node.auth)
        << (node.key.empty() ? ", no key" : ", key set") << "\n";
  }

  out << "circuits (" << config.circuits.size() << "):\n";
  for (const CircuitConfig& circuit : config.circuits) {
    std::vector<std::string> channels;
    for (const ChannelRef& ref : circuit.channels) channels.push_back(ref.ToString());
    out << "  " << circuit.id;
    if (circuit.name != circuit.id) out << " \"" << circuit.name << "\"";
    out << ": " << Join(channels) << ", " << Number(circuit.nominal_volts) << " V";
    if (circuit.one_leg_of_split_phase) out << " (one leg measured)";
    if (circuit.voltage_from) out << " (voltage from " << circuit.voltage_from->ToString() << ")";
    out << ", " << DirectionName(circuit.direction) << "\n";
  }

  out << "units (" << config.units.size() << "):\n";
  for (const UnitConfig& unit : config.units) {
    out << "  " << unit.id;
    if (unit.name != unit.id) out << " \"" << unit.name << "\"";
    out << ": " << (unit.circuits.empty() ? "no circuits of its own" : Join(unit.circuits)) << "\n";
  }

  out << "shared circuits (" << config.shared.size() << "):\n";
  for (const SharedCircuitConfig& shared : config.shared) {
    out << "  " << shared.circuit << ": " << DescribeSplit(shared.split) << "\n";
  }
  out << "remainder: "
      << (config.remainder ? DescribeSplit(*config.remainder) : "not split among units") << "\n";

  out << "alert rules (" << config.alerts.size() << "):\n";
  for (const AlertRuleConfig& alert : config.alerts)
    out << "  " << DescribeAlert(alert, site.currency) << "\n";
  if (!config.webhooks.empty()) {
    out << "webhooks (" << config.webhooks.size() << "):\n";
    for (const WebhookConfig& webhook : config.webhooks) {  // the secret is never shown
      out << "  " << webhook.id << ": " << webhook.url << "\n";
    }
  }

  out << "storage: " << config.storage.path << " (synchronous "
      << SyncModeName(config.storage.synchronous) << ", raw readings kept "
      << config.storage.raw_retention_days << " days)\n";
  out << "nodes report to UDP " << config.ingest.listen << "\n";
  out << "HTTP API on " << config.http.listen
      << (config.http.tls_certificate.empty() ? "" : " (TLS)") << "\n";
  if (config.mqtt.enabled) {  // the password is never shown
    out << "MQTT: broker " << config.mqtt.host << " port " << config.mqtt.port << ", topics under "
        << config.mqtt.topic_prefix << "/\n";
  }
  out << "log level: " << config.log.level << "\n";
  return out.str();
}

}  // namespace ampledger
