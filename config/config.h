// config/config.h
// The whole configuration of one ampledger daemon as plain, validated structs. LoadConfig()
// reads one TOML file (format: config/README.md) once at start-up; everything after that takes
// `const Config&`. There is no global config. A loaded Config is immutable and may be read
// from any thread.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "config/status.h"

namespace ampledger {

// [site]: the building.
struct SiteConfig {
  std::string name;                  // shown on statements and the dashboard
  std::string time_zone;             // IANA zone name, e.g. "America/Chicago"; must exist in tzdata
  std::vector<double> nominal_volts; // e.g. {120, 240} for split phase; at least one, each 50..500
  std::string currency = "USD";      // ISO 4217 code, three capital letters
  std::string tariff;                // name of a tariff file in the tariff library; "" = none
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
  std::string id;                 // e.g. "ct1"; unique within its node
  double gain = 1.0;              // calibration factor applied to current and power (0.5..2)
  double noise_floor_amps = 0.0;  // RMS current below this reads as zero (>= 0)
  double rated_amps = 0.0;        // the CT's rated primary current; 0 = not given
};

// [[node]]: a sensor node on the LAN.
struct NodeConfig {
  std::string id;                  // SenML base name without the trailing "/"; COSE kid
  std::vector<std::uint8_t> key;   // 32-byte HMAC key; from `key` (hex) or `key_file`
  AuthMode auth = AuthMode::kCoseMac0;
  std::vector<ChannelConfig> channels;
};

// "node/channel" as written in the config.
struct ChannelRef {
  std::string node;
  std::string channel;
  bool operator==(const ChannelRef&) const = default;
};

enum class Direction {
  kConsumption,  // energy drawn from the supply
  kExport,       // energy produced on site (solar), counted as export
};

// [[circuit]]: a branch circuit being measured.
struct CircuitConfig {
  std::string id;                     // e.g. "laundry-dryer"
  std::string name;                   // human label; defaults to id
  std::vector<ChannelRef> channels;   // summed; two for a split-phase 240 V load on both legs
  double nominal_volts = 0;           // voltage used when none is measured; default the site's first
  std::optional<ChannelRef> voltage_from;  // a channel whose node measures voltage, if any
  // A 240 V load measured with one CT on one leg of a split-phase supply: current on the
  // other leg is the same, so power is V_line-to-line x I.
  bool one_leg_of_split_phase = false;
  Direction direction = Direction::kConsumption;
  double assumed_power_factor = 1.0;  // used only when real power was not measured (0.1..1)
  double breaker_amps = 0;            // the circuit breaker's rating; 0 = not given
};

// How a shared circuit or the unmetered remainder is divided among units.
enum class ShareRule {
  kEqual,         // the same share for every named unit
  kFixed,         // stated weights (e.g. floor area), normalised to sum 1
  kProportional,  // in proportion to each unit's own metered energy in the cycle
};

// [[unit]]: a dwelling unit (tenant) that owns circuits.
struct UnitConfig {
  std::string id;
  std::string name;
  std::vector<std::string> circuits;  // circuit ids owned by this unit alone
};

// A split of energy among units.
struct ShareConfig {
  ShareRule rule = ShareRule::kEqual;
  std::vector<std::string> units;  // unit ids taking part; empty = all units
  std::vector<double> weights;     // kFixed only: one weight > 0 per entry of `units`
};

// [[shared]]: a circuit whose energy is split among units (a laundry room, hall lights).
struct SharedCircuitConfig {
  std::string circuit;
  ShareConfig split;
};

// Alert rule kinds; the alerts issue gives each its parameters.
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
  std::string id;
  AlertKind kind = AlertKind::kPowerAbove;
  std::vector<std::string> circuits;  // subjects; a rule names circuits, units or nodes
  std::vector<std::string> units;
  std::vector<std::string> nodes;
  double level_watts = 0;
  double clear_watts = 0;
  double hold_seconds = 0;
  double quiet_seconds = 0;       // kCycleDone: time below clear_watts that ends a cycle
  double min_run_seconds = 0;     // kCycleDone: shortest run that counts as a cycle
  int missed_intervals = 3;       // kNodeSilent
  int nights = 3;                 // kStandbyCreep
  std::string window_start;       // kLeftOn: "HH:MM" local, optional
  std::string window_end;
  double budget_kwh = 0;          // kBudget: one of kwh or cost
  double budget_cost = 0;
  std::string budget_period = "day";  // day | week | cycle
};

enum class SyncMode { kOff, kNormal, kFull, kExtra };  // PRAGMA synchronous

// [storage]
struct StorageConfig {
  std::string path = "ampledger.db";  // relative paths are relative to the config file's folder
  int raw_retention_days = 400;       // raw readings older than this are deleted; rollups kept
  SyncMode synchronous = SyncMode::kFull;  // FULL: an acknowledged reading survives power loss
  std::int64_t wal_limit_bytes = 16 << 20;  // journal_size_limit after checkpoints
  int batch_rows = 2000;              // the writer commits at this many rows ...
  int batch_millis = 250;             // ... or this long after the first queued row
};

// [ingest]: the UDP listener for sensor nodes.
struct IngestConfig {
  std::string listen = "0.0.0.0:4717";  // "host:port" or "[v6]:port"
  int receive_buffer_bytes = 1 << 20;   // SO_RCVBUF
  int max_datagram_bytes = 1400;        // larger datagrams are refused (fits one Ethernet frame)
  double max_future_seconds = 60;       // readings stamped later than now + this are refused
  double resend_horizon_seconds = 7 * 86400;  // readings older than now - this are refused
};

// [http]: the JSON API and dashboard.
struct HttpConfig {
  std::string listen = "127.0.0.1:8417";
  int threads = 8;
  std::string tls_certificate;  // PEM files; both or neither
  std::string tls_private_key;
};

// [log]
struct LogConfig {
  std::string level = "info";  // trace | debug | info | warn | error | off
};

struct Config {
  std::string source_path;  // the file this was loaded from, for messages
  SiteConfig site;
  std::vector<NodeConfig> nodes;
  std::vector<CircuitConfig> circuits;
  std::vector<UnitConfig> units;
  std::vector<SharedCircuitConfig> shared;
  std::optional<ShareConfig> remainder;  // split of the unmetered remainder; none = not billed
  std::vector<AlertRuleConfig> alerts;
  StorageConfig storage;
  IngestConfig ingest;
  HttpConfig http;
  LogConfig log;

  // Look-ups by id; nullptr when absent.
  const NodeConfig* FindNode(const std::string& id) const;
  const CircuitConfig* FindCircuit(const std::string& id) const;
  const UnitConfig* FindUnit(const std::string& id) const;
};

// Reads and validates `path`. Errors name the file, line and key and say what was expected:
//   "site.toml:12: circuit[2].channels[0]: no channel \"ct9\" on node \"garage\""
Result<Config> LoadConfig(const std::string& path);

// Same, from text; `source_name` is used in messages and to resolve relative paths.
Result<Config> ParseConfig(const std::string& text, const std::string& source_name);

// A human summary of what `config` defines, for `ampledger check`.
std::string DescribeConfig(const Config& config);

}  // namespace ampledger
