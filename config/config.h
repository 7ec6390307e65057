// config/config.h
// The whole configuration of one ampledger daemon as plain, validated structs. LoadConfig()
// reads one TOML file (format: config/README.md) once at start-up; everything after that takes
// `const Config&`. There is no global config. A loaded Config is immutable and may be read
// from any thread.
#pragma once

#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <date/date.h>

#include "config/mqtt_config.h"
#include "config/status.h"
#include "config/tariff_config.h"

namespace ampledger {

// Ranges beside the fields are checked by LoadConfig; a value outside them is an error, never
// clamped. "required" keys have no default. Ids are 1..64 characters of A-Z a-z 0-9 . _ -

// [[site.tariff_change]]: from local midnight (the site's zone) starting `from`, `tariff`
// applies instead of the one before; earlier days keep their old prices.
struct TariffChange {
  date::year_month_day from;
  std::string tariff;  // a tariff name of the library
};

// [site]: the building.
struct SiteConfig {
  std::string name;       // required; shown on statements and the dashboard
  std::string time_zone;  // required; IANA zone name, e.g. "America/Chicago"; must be in tzdata
  // Required; e.g. {120, 240} for split phase, {230}; 1..4 values, each 50..500.
  std::vector<double> nominal_volts;
  std::string currency = "USD";  // ISO 4217 code, three capital letters
  // The tariff library: a folder of tariff files, one per tariff, named <tariff name>.toml
  // (format: config/tariffs/README.md). Absolute after loading: a relative folder is resolved
  // against the config file's folder; the default is the folder "tariffs" beside the file.
  std::string tariff_dir = "tariffs";
  // Name (an id) of the tariff in force, or before the first change in force; "" = none
  // (no bills). LoadConfig reads every tariff named here and in tariff_changes.
  std::string tariff;
  // [[site.tariff_change]]: later tariffs, in increasing date order; requires `tariff`.
  std::vector<TariffChange> tariff_changes;
  int billing_cycle_day = 1;         // day of the month a billing cycle starts, 1..28
  double max_gap_seconds = 300;      // power is never integrated across a longer gap (1..86400)
};

// How a node's datagrams must be protected.
enum class AuthMode {
  kCoseMac0,  // COSE_Mac0 with HMAC 256/64 or 256/256 under the node key (the default)
  kPlain,     // plain SenML JSON or CBOR; must be opted into per node
};

// One current-transformer input of a node.
struct ChannelConfig {
  std::string id;                 // required; e.g. "ct1"; unique within its node
  double gain = 1.0;              // calibration factor applied to current and power (0.5..2)
  double noise_floor_amps = 0.0;  // RMS current below this reads as zero (0..100)
  double rated_amps = 0.0;        // the CT's rated primary current; 0 = not given (0..10000)
};

// [[node]]: a sensor node on the LAN.
struct NodeConfig {
  std::string id;                  // required; SenML base name without the trailing "/"; COSE kid
  // 32-byte HMAC key from `key` (64 hex digits) or `key_file`; empty = none. Required when
  // auth is kCoseMac0. Secret: never logged, printed or put in a message.
  std::vector<std::uint8_t> key;
  AuthMode auth = AuthMode::kCoseMac0;
  std::vector<ChannelConfig> channels;  // at least one
};

// "node/channel" as written in the config.
struct ChannelRef {
  std::string node;
  std::string channel;
  bool operator==(const ChannelRef&) const = default;
  std::string ToString() const { return node + "/" + channel; }
};

enum class Direction {
  kConsumption,  // energy drawn from the supply
  kExport,       // energy produced on site (solar), counted as export
};

// [[circuit]]: a branch circuit being measured.
struct CircuitConfig {
  std::string id;                     // required; e.g. "laundry-dryer"
  std::string name;                   // human label; defaults to id
  // Required, at least one; summed; two for a split-phase 240 V load on both legs. A channel
  // feeds at most one circuit.
  std::vector<ChannelRef> channels;
  // Voltage used when none is measured (50..500); defaults to the site's first nominal_volts.
  double nominal_volts = 0;
  // A configured channel whose node measures the voltage, if any.
  std::optional<ChannelRef> voltage_from;
  // A 240 V load measured with one CT on one leg of a split-phase supply: current on the
  // other leg is the same, so power is V_line-to-line x I.
  // Only with exactly one channel.
  bool one_leg_of_split_phase = false;
  Direction direction = Direction::kConsumption;
  double assumed_power_factor = 1.0;  // used only when real power was not measured (0.1..1)
  double breaker_amps = 0;            // the circuit breaker's rating; 0 = not given (0..10000)
};

// How a shared circuit or the unmetered remainder is divided among units.
enum class ShareRule {
  kEqual,         // the same share for every named unit
  kFixed,         // stated weights (e.g. floor area), normalised to sum 1
  kProportional,  // in proportion to each unit's own metered energy in the cycle
};

// [[unit]]: a dwelling unit (tenant) that owns circuits.
struct UnitConfig {
  std::string id;                     // required
  std::string name;                   // human label; defaults to id
  std::vector<std::string> circuits;  // circuit ids owned by this unit alone; may be empty
};

// A split of energy among units.
struct ShareConfig {
  ShareRule rule = ShareRule::kEqual;
  // Unit ids taking part, each once; empty = all units (not allowed with kFixed).
  std::vector<std::string> units;
  std::vector<double> weights;     // kFixed only (required): one weight > 0 per entry of `units`
};

// [[shared]]: a circuit whose energy is split among units (a laundry room, hall lights).
// A shared circuit is owned by no unit and shared once.
struct SharedCircuitConfig {
  std::string circuit;  // required
  ShareConfig split;
};

// Alert rule kinds. config/README.md lists which keys each kind takes; a key that does not
// apply to the rule's kind is an error.
enum class AlertKind {
  kPowerAbove,   // power above `level_watts` for `hold_seconds`; clears below `clear_watts`
  kPowerBelow,   // power below `level_watts` for `hold_seconds`; clears above `clear_watts`
  kBudget,       // energy or cost over a budget per period, with a projection
  kCycleDone,    // a run above `level_watts` then quiet below `clear_watts`
  kLeftOn,       // on for longer than `hold_seconds`, or at all inside a daily window
  kNodeSilent,   // no datagram for `missed_intervals` reporting intervals
  kStandbyCreep, // overnight minimum above `level_watts` for `nights` nights
};

// [[alert]]
struct AlertRuleConfig {
  std::string id;                     // required; unique among alert rules
  AlertKind kind = AlertKind::kPowerAbove;  // required
  // Subjects. kNodeSilent names nodes (empty = every node); kCycleDone and kLeftOn name one or
  // more circuits; the other kinds name circuits and/or units, at least one.
  std::vector<std::string> circuits;
  std::vector<std::string> units;
  std::vector<std::string> nodes;
  // Required by every kind but kBudget and kNodeSilent (above 0, up to 1e6).
  double level_watts = 0;
  // Hysteresis; defaults to level_watts. kPowerBelow: >= level_watts; others: <= level_watts.
  double clear_watts = 0;
  double hold_seconds = 0;        // 0..604800
  double quiet_seconds = 0;       // kCycleDone: time below clear_watts that ends a cycle (0..86400)
  double min_run_seconds = 0;     // kCycleDone: shortest run that counts as a cycle (0..86400)
  int missed_intervals = 3;       // kNodeSilent (1..1000)
  int nights = 3;                 // kStandbyCreep (1..60)
  std::string window_start;       // kLeftOn: "HH:MM" local; both window ends or neither
  std::string window_end;         // kLeftOn needs hold_seconds > 0 or a window (or both)
  double budget_kwh = 0;          // kBudget: exactly one of kwh or cost (above 0, up to 1e9)
  double budget_cost = 0;         // in the site's currency
  std::string budget_period = "day";  // day | week | cycle
};

// [[webhook]]: a URL that receives every alert event as a signed JSON POST (api/ALERTS.md
// documents the body, the signature and the retries).
struct WebhookConfig {
  std::string id;   // required; unique among webhooks; names its deliveries in the outbox
  std::string url;  // required; "http://host[:port]/path" or "https://...", see ParseWebhookUrl
  // The HMAC-SHA256 key, from `secret` or the first line of `secret_file` (relative paths
  // against the config file's folder): 16 to 256 characters. Secret: never logged or put in a
  // message.
  std::string secret;
  double timeout_seconds = 10;  // one attempt's connect + write + read limit (1..60)
};

enum class SyncMode { kOff, kNormal, kFull, kExtra };  // PRAGMA synchronous

// [storage]
struct StorageConfig {
  // Absolute after loading: a relative path in the file is resolved against the config file's
  // folder.
  std::string path = "ampledger.db";
  // Raw readings older than this are deleted; rollups are kept (1..36500).
  int raw_retention_days = 400;
  SyncMode synchronous = SyncMode::kFull;  // FULL: an acknowledged reading survives power loss
  std::int64_t wal_limit_bytes = 16 << 20;  // journal_size_limit after checkpoints (0..2^40)
  int batch_rows = 2000;              // the writer commits at this many rows (1..100000) ...
  int batch_millis = 250;             // ... or this long after the first queued row (1..10000)
  // Below this much free space in the database's folder the daemon answers "not ready"
  // (/v1/ready): SQLite needs room for the WAL and checkpoints (0..2^50).
  std::int64_t min_free_bytes = 64 << 20;
};

// [ingest]: the UDP listener for sensor nodes.
struct IngestConfig {
  // "host:port" or "[v6]:port", port 0..65535 (see ParseListenAddress).
  std::string listen = "0.0.0.0:4717";
  int receive_buffer_bytes = 1 << 20;  // SO_RCVBUF (4096..2^28)
  // Larger datagrams are refused; the default fits one Ethernet frame. 64..65507, the largest
  // UDP payload over IPv4 (65535 - 8 byte UDP header - 20 byte IPv4 header).
  int max_datagram_bytes = 1400;
  double max_future_seconds = 60;  // readings stamped after now + this are refused (0..86400)
  // Readings older than now - this are refused (60..31622400, and at most
  // storage.raw_retention_days, or retention would delete them as they arrive).
  double resend_horizon_seconds = 7 * 86400;
};

// [http]: the JSON API and dashboard.
struct HttpConfig {
  std::string listen = "127.0.0.1:8417";  // as IngestConfig::listen
  int threads = 8;                        // 1..256
  std::string tls_certificate;  // PEM files; both or neither; absolute after loading, relative
  std::string tls_private_key;  // paths resolved against the config file's folder. "" = no TLS
};

// [log]
struct LogConfig {
  std::string level = "info";  // trace | debug | info | warn | error | off
};

// One tariff file of the library, as read (TariffConfig is validated further by
// Tariff::Create in daemon/metering).
struct TariffFile {
  std::string name;  // the file's name without ".toml", as site.tariff names it
  std::string path;  // absolute
  TariffConfig tariff;
};

struct Config {
  std::string source_path;  // the file this was loaded from, for messages
  SiteConfig site;
  // Every tariff the site names (site.tariff, then each change's, each once), in that order.
  std::vector<TariffFile> tariffs;
  std::vector<NodeConfig> nodes;
  std::vector<CircuitConfig> circuits;
  std::vector<UnitConfig> units;
  std::vector<SharedCircuitConfig> shared;
  std::optional<ShareConfig> remainder;  // split of the unmetered remainder; none = not billed
  std::vector<AlertRuleConfig> alerts;
  std::vector<WebhookConfig> webhooks;
  StorageConfig storage;
  IngestConfig ingest;
  HttpConfig http;
  LogConfig log;
  MqttConfig mqtt;  // [mqtt]: off by default

  // Look-ups by id; nullptr when absent.
  const NodeConfig* FindNode(const std::string& id) const;
  const CircuitConfig* FindCircuit(const std::string& id) const;
  const UnitConfig* FindUnit(const std::string& id) const;
  const TariffFile* FindTariff(const std::string& name) const;

  // The flat channel index used by ChannelReading::channel and storage: every channel of every
  // node, in Config order (node by node, channel by channel), numbered from 0. The tables behind
  // these are built by IndexChannels(), which LoadConfig and ParseConfig call; all look-ups
  // are O(1) or O(log n). Indexes are only meaningful for the Config that made them.
  int ChannelCount() const { return static_cast<int>(flat_channels_.size()); }
  // -1 when no such node or channel.
  int FindChannelIndex(const ChannelRef& ref) const;
  int FindChannelIndex(std::string_view node, std::string_view channel) const;
  // Precondition for the *At functions: 0 <= index < ChannelCount().
  const ChannelRef& ChannelAt(int index) const { return flat_channels_[index].ref; }
  const ChannelConfig& ChannelSettingsAt(int index) const;  // gain, noise floor, rating
  int NodeOfChannel(int index) const { return flat_channels_[index].node; }  // index into nodes
  // The index into `circuits` of the circuit the channel feeds; -1 if it feeds none.
  int CircuitOfChannel(int index) const { return flat_channels_[index].circuit; }
  // The flat indexes of the channels of circuits[circuit_index], in the circuit's order.
  const std::vector<int>& ChannelsOfCircuit(int circuit_index) const {
    return circuit_channels_[circuit_index];
  }
  // Index into `nodes` / `circuits`; -1 when absent.
  int FindNodeIndex(std::string_view id) const;
  int FindCircuitIndex(std::string_view id) const;

  // Rebuilds the look-up tables from `nodes` and `circuits`. Code that builds a Config by hand
  // (tests) calls this after filling them. References that do not resolve are skipped here;
  // LoadConfig rejects them before.
  void IndexChannels();

 private:
  struct FlatChannel {
    ChannelRef ref;
    int node = -1;     // index into nodes
    int slot = -1;     // index into nodes[node].channels
    int circuit = -1;  // index into circuits, or -1
  };
  std::vector<FlatChannel> flat_channels_;
  std::vector<int> node_first_channel_;  // flat index of each node's first channel
  std::vector<std::vector<int>> circuit_channels_;
  std::map<std::string, int, std::less<>> node_index_;
  std::map<std::string, int, std::less<>> circuit_index_;
};

// Reads and validates the TOML file at `path` (format and keys: config/README.md). Stops at
// the first error; every error is InvalidArgument (IOError if the file cannot be read) with
// one message format:
//   <file>:<line>: <key path>: <what is wrong, and what was expected>
//   "site.toml:12: circuit[2].channels[1]: no channel \"ct9\" on node \"garage\""
// <file> is `path` as given; <line> is where the key is written, or for a missing key the line
// of the table that lacks it (omitted, "<file>: site: ...", only when a whole required table is
// absent). The key path names keys from the top of the file joined by ".", with array elements
// and [[array-of-tables]] entries numbered from 0 in file order: node[1].channel[0].gain.
// TOML syntax errors read "<file>:<line>: TOML syntax: <description> (column N)".
// Relative paths in the file (storage.path, http.tls_*, node key_file, site.tariff_dir) are
// resolved against the folder of `path`, so the Config holds absolute paths. Node keys never
// appear in messages. The tariff files the site names are read too; an error inside one is
// reported in the same format with the tariff file as <file>.
Result<Config> LoadConfig(const std::string& path);

// Same, from text. `source_name` is used as <file> in messages; relative paths in the text are
// resolved against the folder of `source_name` (taken relative to the current directory when
// it is itself relative, e.g. "site.toml" -> the current directory).
Result<Config> ParseConfig(const std::string& text, const std::string& source_name);

// A human, multi-line summary of what `config` defines, for `ampledger check`: site, zone,
// voltages, currency, nodes (channel count, auth mode), circuits (channels, direction), units,
// shared splits, the remainder, alert rules, storage, listen addresses. Never contains a key.
std::string DescribeConfig(const Config& config);

// A listen address split into host and port. Accepted forms: "host:port" where host is an
// IPv4 address or a DNS name, and "[v6]:port" with an IPv6 address (host is then given without
// brackets); port 0..65535. Returns InvalidArgument with a message saying what was expected.
struct ListenAddress {
  std::string host;
  int port = 0;
};
Result<ListenAddress> ParseListenAddress(std::string_view text);

// A webhook URL split up: "http://hub.lan:8123/ampledger/events?src=1" -> http, "hub.lan",
// 8123, "/ampledger/events?src=1". The host is a DNS name, an IPv4 address or "[v6]" (kept
// with its brackets); the port defaults to 80 / 443; the path defaults to "/" and may carry a
// query but no fragment, spaces or control characters. InvalidArgument says what was expected.
struct WebhookUrl {
  bool https = false;
  std::string host;
  int port = 0;
  std::string path;
};
Result<WebhookUrl> ParseWebhookUrl(std::string_view text);

// Names used in config files and in DescribeConfig, e.g. "cose", "power_above", "full".
const char* AuthModeName(AuthMode mode);
const char* DirectionName(Direction direction);
const char* ShareRuleName(ShareRule rule);
const char* AlertKindName(AlertKind kind);
const char* SyncModeName(SyncMode mode);

}  // namespace ampledger
