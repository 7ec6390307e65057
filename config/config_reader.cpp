// config/config_reader.cpp
// One function per section of the file; each reads its keys in a fixed order through a
// TableReader, so the first error found is the one reported.
#include "config/config_reader.h"

#include <date/tz.h>

#include <cctype>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>

#include "config/alert_rule_reader.h"
#include "config/hex.h"
#include "config/mqtt_reader.h"
#include "config/table_reader.h"
#include "config/tariff_reader.h"

namespace ampledger {

namespace {

std::string Quote(std::string_view text) {
  return "\"" + std::string(text) + "\"";
}

std::string Indexed(const std::string& path, size_t index) {
  return path + "[" + std::to_string(index) + "]";
}

std::string ResolvePath(const std::string& base_dir, const std::string& path) {
  std::filesystem::path p(path);
  if (p.is_relative()) p = std::filesystem::path(base_dir) / p;
  return p.lexically_normal().string();
}

// Splits "node/channel"; false if the text is not of that shape.
bool ParseChannelRef(const std::string& text, ChannelRef* ref) {
  size_t slash = text.find('/');
  if (slash == std::string::npos || text.find('/', slash + 1) != std::string::npos) return false;
  ref->node = text.substr(0, slash);
  ref->channel = text.substr(slash + 1);
  return IsValidId(ref->node) && IsValidId(ref->channel);
}

// Reads a "node/channel" string at `key` of `r`. Returns false if absent or wrong.
bool ReadChannelRef(TableReader& r, std::string_view key, ChannelRef* ref) {
  std::string text;
  if (!r.String(key, &text)) return false;
  if (!ParseChannelRef(text, ref)) {
    r.Fail(key, "expected \"node/channel\" (two ids), got " + Quote(text));
    return false;
  }
  return true;
}

class ConfigReader {
 public:
  ConfigReader(const std::string& base_dir, KeyLines* lines)
      : base_dir_(base_dir), context_(lines) {}

  Status Read(const toml::table& root, Config* config) {
    TableReader r(&context_, root, "");
    r.AllowOnly({"site", "node", "circuit", "unit", "shared", "remainder", "alert", "webhook",
                 "storage", "ingest", "http", "log", "mqtt"});
    ReadSite(r, config);
    ReadNodes(r, &config->nodes);
    ReadCircuits(r, config->site, &config->circuits);
    ReadUnits(r, &config->units);
    ReadShared(r, &config->shared);
    if (const toml::table* table = r.Table("remainder", "[remainder]")) {
      TableReader remainder(&context_, *table, "remainder");
      remainder.AllowOnly({"rule", "units", "weights"});
      config->remainder.emplace();
      ReadShare(remainder, &*config->remainder);
    }
    ReadAlerts(r, &config->alerts);
    ReadWebhooks(r, &config->webhooks);
    if (const toml::table* table = r.Table("storage", "[storage]")) {
      ReadStorage(TableReader(&context_, *table, "storage"), &config->storage);
    }
    config->storage.path = ResolvePath(base_dir_, config->storage.path);
    if (const toml::table* table = r.Table("ingest", "[ingest]")) {
      ReadIngest(TableReader(&context_, *table, "ingest"), &config->ingest);
    }
    if (const toml::table* table = r.Table("http", "[http]")) {
      ReadHttp(TableReader(&context_, *table, "http"), &config->http);
    }
    if (const toml::table* table = r.Table("log", "[log]")) {
      TableReader log(&context_, *table, "log");
      log.AllowOnly({"level"});
      std::string_view level;
      if (log.Choice<std::string_view>("level",
                                       {{"trace", "trace"},
                                        {"debug", "debug"},
                                        {"info", "info"},
                                        {"warn", "warn"},
                                        {"error", "error"},
                                        {"off", "off"}},
                                       &level)) {
        config->log.level = std::string(level);
      }
    }
    if (const toml::table* table = r.Table("mqtt", "[mqtt]")) {
      TableReader mqtt(&context_, *table, "mqtt");
      ReadMqtt(mqtt, base_dir_, &config->mqtt);
    }
    FillMqttDefaults(config->site.name, &config->mqtt);
    return context_.error();
  }

 private:
  void ReadSite(TableReader& root, Config* config) {
    SiteConfig* site = &config->site;
    const toml::table* table = root.Table("site", "[site]", Need::kRequired);
    if (table == nullptr) return;
    TableReader r(&context_, *table, "site");
    r.AllowOnly({"name", "time_zone", "nominal_volts", "currency", "tariff_dir", "tariff",
                 "tariff_change", "billing_cycle_day", "max_gap_seconds"});
    r.String("name", &site->name, Need::kRequired);
    if (r.String("time_zone", &site->time_zone, Need::kRequired)) {
      CheckTimeZone(r, site->time_zone);
    }
    if (r.Numbers("nominal_volts", &site->nominal_volts, {50, 500}, Need::kRequired) &&
        (site->nominal_volts.empty() || site->nominal_volts.size() > 4)) {
      r.Fail("nominal_volts",
             "expected 1 to 4 voltages, got " + std::to_string(site->nominal_volts.size()));
    }
    if (r.String("currency", &site->currency)) {
      const std::string& c = site->currency;
      bool ok = c.size() == 3;
      for (char ch : c) ok = ok && ch >= 'A' && ch <= 'Z';
      if (!ok) {
        r.Fail("currency", "expected an ISO 4217 code of three capital letters, got " + Quote(c));
      }
    }
    if (r.String("tariff_dir", &site->tariff_dir) && site->tariff_dir.empty()) {
      r.Fail("tariff_dir", "expected a folder path, got \"\"");
    }
    site->tariff_dir = ResolvePath(base_dir_, site->tariff_dir);
    if (r.String("tariff", &site->tariff)) CheckTariffName(r, "tariff", site->tariff);
    ReadTariffChanges(r, site);
    r.Integer("billing_cycle_day", &site->billing_cycle_day, 1, 28);
    r.Number("max_gap_seconds", &site->max_gap_seconds, {1, 86400});
    if (!site->tariff.empty()) ReadTariffLibrary(r, config);
  }

  static bool CheckTariffName(TableReader& r, std::string_view key, const std::string& name) {
    if (IsValidId(name)) return true;
    r.Fail(key, "expected a tariff name of 1 to 64 letters, digits, '.', '_' or '-', got " +
                    Quote(name));
    return false;
  }

  void ReadTariffChanges(TableReader& site_reader, SiteConfig* site) {
    std::vector<const toml::table*> tables =
        site_reader.Tables("tariff_change", "[[site.tariff_change]]");
    if (!tables.empty() && site->tariff.empty() && !site_reader.failed()) {
      site_reader.Fail("tariff", "missing; [[site.tariff_change]] needs the tariff in force "
                                 "before the first change");
      return;
    }
    for (size_t i = 0; i < tables.size() && !site_reader.failed(); ++i) {
      TableReader r(&context_, *tables[i], Indexed("site.tariff_change", i));
      r.AllowOnly({"from", "tariff"});
      TariffChange change;
      if (!r.Date("from", &change.from, Need::kRequired)) return;
      if (!site->tariff_changes.empty() && change.from <= site->tariff_changes.back().from) {
        const date::sys_days before{site->tariff_changes.back().from};
        r.Fail("from", "expected a date after " + date::format("%F", before) +
                           " (the change before); list changes in date order");
        return;
      }
      if (!r.String("tariff", &change.tariff, Need::kRequired) ||
          !CheckTariffName(r, "tariff", change.tariff)) {
        return;
      }
      site->tariff_changes.push_back(change);
    }
  }

  // Reads each tariff the site names from the library, once, in the order first named; the
  // error for a missing file names the key that asked for it, errors inside a tariff file are
  // that file's (config/tariff_reader.h).
  void ReadTariffLibrary(TableReader& r, Config* config) {
    const SiteConfig& site = config->site;
    std::vector<std::pair<std::string, std::string>> wanted = {{"site.tariff", site.tariff}};
    for (size_t i = 0; i < site.tariff_changes.size(); ++i) {
      wanted.emplace_back(Indexed("site.tariff_change", i) + ".tariff",
                          site.tariff_changes[i].tariff);
    }
    for (const auto& [key_path, name] : wanted) {
      if (r.failed()) return;
      if (config->FindTariff(name) != nullptr) continue;
      std::string path = ResolvePath(site.tariff_dir, name + ".toml");
      std::error_code error;
      if (!std::filesystem::is_regular_file(path, error)) {
        context_.FailPath(key_path, "no tariff " + Quote(name) + " in the tariff library: " +
                                        Quote(path) + " is not a file (site.tariff_dir is " +
                                        Quote(site.tariff_dir) + ")");
        return;
      }
      Result<TariffConfig> tariff = ReadTariffFile(path);
      if (!tariff.ok()) {
        context_.FailWith(tariff.status());
        return;
      }
      if (!tariff->currency.empty() && tariff->currency != site.currency) {
        context_.FailPath(key_path, "tariff " + Quote(name) + " is priced in " +
                                        tariff->currency + ", the site's currency is " +
                                        site.currency);
        return;
      }
      config->tariffs.push_back({name, path, std::move(tariff).value()});
    }
  }

  static void CheckTimeZone(TableReader& r, const std::string& name) {
    bool found = false;
    try {
      found = date::locate_zone(name) != nullptr;
    } catch (const std::exception&) {
      // locate_zone throws std::runtime_error for an unknown name.
    }
    if (!found) {
      r.Fail("time_zone", "expected an IANA time zone name such as \"America/Chicago\", got " +
                              Quote(name) + ", which is not in the time zone database");
    }
  }

  void ReadNodes(TableReader& root, std::vector<NodeConfig>* nodes) {
    std::vector<const toml::table*> tables = root.Tables("node", "[[node]]", Need::kRequired);
    if (!root.failed() && tables.empty()) root.Fail("node", "expected at least one [[node]]");
    for (size_t i = 0; i < tables.size() && !root.failed(); ++i) {
      TableReader r(&context_, *tables[i], Indexed("node", i));
      NodeConfig& node = nodes->emplace_back();
      r.AllowOnly({"id", "auth", "key", "key_file", "channel"});
      r.Id("id", &node.id);
      r.Choice<AuthMode>("auth", {{"cose", AuthMode::kCoseMac0}, {"plain", AuthMode::kPlain}},
                         &node.auth);
      ReadNodeKey(r, &node.key);
      if (!r.failed() && node.auth == AuthMode::kCoseMac0 && node.key.empty()) {
        r.Fail("key", "missing; a node with auth = \"cose\" needs key or key_file");
      }
      std::vector<const toml::table*> channels =
          r.Tables("channel", "[[node.channel]]", Need::kRequired);
      if (!r.failed() && channels.empty()) {
        r.Fail("channel", "expected at least one [[node.channel]]");
      }
      for (size_t c = 0; c < channels.size() && !r.failed(); ++c) {
        TableReader cr(&context_, *channels[c], Indexed(r.KeyPath("channel"), c));
        ChannelConfig& channel = node.channels.emplace_back();
        cr.AllowOnly({"id", "gain", "noise_floor_amps", "rated_amps"});
        cr.Id("id", &channel.id);
        cr.Number("gain", &channel.gain, {0.5, 2});
        cr.Number("noise_floor_amps", &channel.noise_floor_amps, {0, 100});
        cr.Number("rated_amps", &channel.rated_amps, {0, 10000});
      }
    }
  }

  // The key's text never reaches a message: errors describe only its shape.
  void ReadNodeKey(TableReader& r, std::vector<std::uint8_t>* key) {
    if (r.Has("key") && r.Has("key_file")) {
      r.Fail("key_file", "give key or key_file, not both");
      return;
    }
    std::string why;
    std::string hex;
    if (r.String("key", &hex) && !DecodeHexKey(hex, false, key, &why)) r.Fail("key", why);
    std::string file;
    if (!r.String("key_file", &file)) return;
    std::string path = ResolvePath(base_dir_, file);
    std::ifstream in(path, std::ios::binary);
    char buffer[4096];
    in.read(buffer, sizeof buffer);
    if (in.bad() || (!in && !in.eof())) {
      r.Fail("key_file", "cannot read " + Quote(path) + ": " + std::strerror(errno));
      return;
    }
    if (!DecodeHexKey(std::string_view(buffer, in.gcount()), true, key, &why)) {
      r.Fail("key_file", Quote(path) + ": " + why);
    }
  }

  void ReadCircuits(TableReader& root, const SiteConfig& site,
                    std::vector<CircuitConfig>* circuits) {
    std::vector<const toml::table*> tables = root.Tables("circuit", "[[circuit]]", Need::kRequired);
    if (!root.failed() && tables.empty()) root.Fail("circuit", "expected at least one [[circuit]]");
    for (size_t i = 0; i < tables.size() && !root.failed(); ++i) {
      TableReader r(&context_, *tables[i], Indexed("circuit", i));
      CircuitConfig& circuit = circuits->emplace_back();
      r.AllowOnly({"id", "name", "channels", "nominal_volts", "voltage_from",
                   "one_leg_of_split_phase", "direction", "assumed_power_factor", "breaker_amps"});
      r.Id("id", &circuit.id);
      circuit.name = circuit.id;
      r.String("name", &circuit.name);
      ReadCircuitChannels(r, &circuit.channels);
      if (!site.nominal_volts.empty()) circuit.nominal_volts = site.nominal_volts.front();
      r.Number("nominal_volts", &circuit.nominal_volts, {50, 500});
      ChannelRef voltage_from;
      if (ReadChannelRef(r, "voltage_from", &voltage_from)) circuit.voltage_from = voltage_from;
      if (r.Bool("one_leg_of_split_phase", &circuit.one_leg_of_split_phase) &&
          circuit.one_leg_of_split_phase && circuit.channels.size() != 1) {
        r.Fail("one_leg_of_split_phase",
               "applies only to a circuit with exactly one channel, got " +
                   std::to_string(circuit.channels.size()));
      }
      r.Choice<Direction>(
          "direction", {{"consumption", Direction::kConsumption}, {"export", Direction::kExport}},
          &circuit.direction);
      r.Number("assumed_power_factor", &circuit.assumed_power_factor, {0.1, 1});
      r.Number("breaker_amps", &circuit.breaker_amps, {0, 10000});
    }
  }

  void ReadCircuitChannels(TableReader& r, std::vector<ChannelRef>* refs) {
    std::vector<std::string> texts;
    if (!r.Strings("channels", &texts, Need::kRequired)) return;
    if (texts.empty()) r.Fail("channels", "expected at least one \"node/channel\"");
    for (size_t i = 0; i < texts.size(); ++i) {
      ChannelRef& ref = refs->emplace_back();
      if (!ParseChannelRef(texts[i], &ref)) {
        context_.FailPath(Indexed(r.KeyPath("channels"), i),
                          "expected \"node/channel\" (two ids), got " + Quote(texts[i]));
        return;
      }
    }
  }

  void ReadUnits(TableReader& root, std::vector<UnitConfig>* units) {
    std::vector<const toml::table*> tables = root.Tables("unit", "[[unit]]");
    for (size_t i = 0; i < tables.size() && !root.failed(); ++i) {
      TableReader r(&context_, *tables[i], Indexed("unit", i));
      UnitConfig& unit = units->emplace_back();
      r.AllowOnly({"id", "name", "circuits"});
      r.Id("id", &unit.id);
      unit.name = unit.id;
      r.String("name", &unit.name);
      r.Strings("circuits", &unit.circuits);
    }
  }

  void ReadShared(TableReader& root, std::vector<SharedCircuitConfig>* shared) {
    std::vector<const toml::table*> tables = root.Tables("shared", "[[shared]]");
    for (size_t i = 0; i < tables.size() && !root.failed(); ++i) {
      TableReader r(&context_, *tables[i], Indexed("shared", i));
      SharedCircuitConfig& entry = shared->emplace_back();
      r.AllowOnly({"circuit", "rule", "units", "weights"});
      r.String("circuit", &entry.circuit, Need::kRequired);
      ReadShare(r, &entry.split);
    }
  }

  void ReadShare(TableReader& r, ShareConfig* split) {
    r.Choice<ShareRule>("rule",
                        {{"equal", ShareRule::kEqual},
                         {"fixed", ShareRule::kFixed},
                         {"proportional", ShareRule::kProportional}},
                        &split->rule);
    r.Strings("units", &split->units);
    r.Numbers("weights", &split->weights, {0, 1e9, true});
    if (r.failed()) return;
    if (split->rule != ShareRule::kFixed) {
      if (r.Has("weights")) r.Fail("weights", "applies only to rule = \"fixed\"");
    } else if (split->units.empty()) {
      r.Fail("units", "rule = \"fixed\" needs the units listed, one weight each");
    } else if (!r.Has("weights")) {
      r.Fail("weights", "missing; rule = \"fixed\" needs one weight per unit");
    } else if (split->weights.size() != split->units.size()) {
      r.Fail("weights", "expected " + std::to_string(split->units.size()) +
                            " weights, one per unit, got " + std::to_string(split->weights.size()));
    }
  }

  void ReadAlerts(TableReader& root, std::vector<AlertRuleConfig>* alerts) {
    std::vector<const toml::table*> tables = root.Tables("alert", "[[alert]]");
    for (size_t i = 0; i < tables.size() && !root.failed(); ++i) {
      TableReader r(&context_, *tables[i], Indexed("alert", i));
      ReadAlertRule(r, &alerts->emplace_back());
    }
  }

  void ReadWebhooks(TableReader& root, std::vector<WebhookConfig>* webhooks) {
    std::vector<const toml::table*> tables = root.Tables("webhook", "[[webhook]]");
    for (size_t i = 0; i < tables.size(); ++i) {
      TableReader r(&context_, *tables[i], Indexed("webhook", i));
      WebhookConfig& webhook = webhooks->emplace_back();
      r.AllowOnly({"id", "url", "secret", "secret_file", "timeout_seconds"});
      r.Id("id", &webhook.id);
      if (r.String("url", &webhook.url, Need::kRequired)) {
        Result<WebhookUrl> url = ParseWebhookUrl(webhook.url);
        if (!url.ok()) r.Fail("url", url.status().message());
      }
      ReadWebhookSecret(r, &webhook.secret);
      r.Number("timeout_seconds", &webhook.timeout_seconds, {1, 60});
    }
  }

  // The secret never reaches a message: errors describe only its length.
  void ReadWebhookSecret(TableReader& r, std::string* secret) {
    if (r.Has("secret") == r.Has("secret_file")) {
      r.Fail("secret", r.Has("secret") ? "give secret or secret_file, not both"
                                       : "missing; expected secret or secret_file");
      return;
    }
    std::string key = r.Has("secret") ? "secret" : "secret_file";
    if (key == "secret") {
      if (!r.String("secret", secret)) return;
    } else {
      std::string file;
      if (!r.String("secret_file", &file)) return;
      std::string path = ResolvePath(base_dir_, file);
      std::ifstream in(path, std::ios::binary);
      if (!in) {
        r.Fail("secret_file", "cannot read " + Quote(path) + ": " + std::strerror(errno));
        return;
      }
      std::getline(in, *secret);
      while (!secret->empty() && std::isspace(static_cast<unsigned char>(secret->back()))) {
        secret->pop_back();
      }
    }
    if (secret->size() < 16 || secret->size() > 256) {
      r.Fail(key, "expected a secret of 16 to 256 characters, got " +
                      std::to_string(secret->size()));
    }
  }

  void ReadStorage(TableReader r, StorageConfig* storage) {
    r.AllowOnly({"path", "raw_retention_days", "synchronous", "wal_limit_bytes", "batch_rows",
                 "batch_millis", "min_free_bytes"});
    if (r.String("path", &storage->path) && storage->path.empty()) {
      r.Fail("path", "expected a file path, got \"\"");
    }
    r.Integer("raw_retention_days", &storage->raw_retention_days, 1, 36500);
    r.Choice<SyncMode>("synchronous",
                       {{"off", SyncMode::kOff},
                        {"normal", SyncMode::kNormal},
                        {"full", SyncMode::kFull},
                        {"extra", SyncMode::kExtra}},
                       &storage->synchronous);
    r.Integer("wal_limit_bytes", &storage->wal_limit_bytes, 0, std::int64_t{1} << 40);
    r.Integer("batch_rows", &storage->batch_rows, 1, 100000);
    r.Integer("batch_millis", &storage->batch_millis, 1, 10000);
    r.Integer("min_free_bytes", &storage->min_free_bytes, 0, std::int64_t{1} << 50);
  }

  static void ReadListen(TableReader& r, std::string* listen) {
    if (!r.String("listen", listen)) return;
    Result<ListenAddress> address = ParseListenAddress(*listen);
    if (!address.ok()) r.Fail("listen", address.status().message());
  }

  static void ReadIngest(TableReader r, IngestConfig* ingest) {
    r.AllowOnly({"listen", "receive_buffer_bytes", "max_datagram_bytes", "max_future_seconds",
                 "resend_horizon_seconds"});
    ReadListen(r, &ingest->listen);
    r.Integer("receive_buffer_bytes", &ingest->receive_buffer_bytes, 4096, 1 << 28);
    r.Integer("max_datagram_bytes", &ingest->max_datagram_bytes, 64, 65507);
    r.Number("max_future_seconds", &ingest->max_future_seconds, {0, 86400});
    r.Number("resend_horizon_seconds", &ingest->resend_horizon_seconds, {60, 366 * 86400});
  }

  void ReadHttp(TableReader r, HttpConfig* http) {
    r.AllowOnly({"listen", "threads", "tls_certificate", "tls_private_key"});
    ReadListen(r, &http->listen);
    r.Integer("threads", &http->threads, 1, 256);
    for (auto [key, out] : {std::pair{"tls_certificate", &http->tls_certificate},
                            std::pair{"tls_private_key", &http->tls_private_key}}) {
      if (r.String(key, out)) {
        if (out->empty()) r.Fail(key, "expected a file path, got \"\"");
        *out = ResolvePath(base_dir_, *out);
      }
    }
    if (r.Has("tls_certificate") != r.Has("tls_private_key")) {
      r.Fail(r.Has("tls_certificate") ? "tls_private_key" : "tls_certificate",
             "missing; give both tls_certificate and tls_private_key, or neither");
    }
  }

  std::string base_dir_;
  ReadContext context_;
};

}  // namespace

Status ReadConfigText(const std::string& text, const std::string& base_dir, Config* config,
                      KeyLines* lines) {
  toml::table root;
  try {
    root = toml::parse(text, lines->source());
  } catch (const toml::parse_error& error) {
    const toml::source_position& where = error.source().begin;
    return Status::InvalidArgument(
        KeyLines::Format(lines->source(), static_cast<int>(where.line), "",
                         "TOML syntax: " + std::string(error.description()) + " (column " +
                             std::to_string(where.column) + ")"));
  }
  return ConfigReader(base_dir, lines).Read(root, config);
}

}  // namespace ampledger
