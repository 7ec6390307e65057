// daemon/main.cpp: the `ampledger` command line. Each subcommand is a small function; the work
// is done by the libraries below.
#include <malloc.h>
#include <signal.h>

#include <CLI/CLI.hpp>
#include <spdlog/spdlog.h>

#include <atomic>
#include <functional>
#include <cstdio>
#include <iostream>
#include <thread>

#include "config/config.h"
#include "daemon/ct_plan_command.h"
#include "daemon/demo.h"
#include "daemon/demo_simulator.h"
#include "daemon/espi_command.h"
#include "daemon/logging.h"
#include "daemon/meter_read_command.h"
#include "daemon/metering/tariff_schedule.h"
#include "daemon/node_command.h"
#include "daemon/send_command.h"
#include "daemon/service.h"
#include "daemon/statement_command.h"
#include "daemon/token_command.h"
#include "storage/backup.h"

namespace ampledger {
namespace {

constexpr const char* kDefaultConfig = "/etc/ampledger/ampledger.toml";

// Runs `service` until SIGTERM or SIGINT (or until it stops by itself), then flushes and
// joins. The signals are blocked in every thread and taken here with sigtimedwait, so no
// handler runs in an arbitrary thread.
int RunUntilSignalled(Service& service, const std::function<Status()>& after_start = {}) {
  sigset_t signals;
  sigemptyset(&signals);
  sigaddset(&signals, SIGTERM);
  sigaddset(&signals, SIGINT);
  pthread_sigmask(SIG_BLOCK, &signals, nullptr);  // before Start(): threads inherit the mask

  if (Status started = service.Start(); !started.ok()) {
    spdlog::error("cannot start: {}", started.ToString());
    return 1;
  }
  if (after_start) {
    if (Status started = after_start(); !started.ok()) {
      spdlog::error("cannot start: {}", started.ToString());
      service.RequestStop();
      (void)service.Wait();
      return 1;
    }
  }
  std::atomic<bool> done{false};
  std::thread signal_waiter([&] {
    timespec tick{0, 200'000'000};
    while (!done.load()) {
      int signal_number = sigtimedwait(&signals, nullptr, &tick);
      if (signal_number > 0) {
        spdlog::info("received {}, stopping", strsignal(signal_number));
        service.RequestStop();
        return;
      }
    }
  });
  Status stopped = service.Wait();
  done = true;
  signal_waiter.join();
  if (!stopped.ok()) {
    spdlog::error("stopped: {}", stopped.ToString());
    return 1;
  }
  spdlog::info("stopped cleanly");
  return 0;
}

Result<Config> LoadOrReport(const std::string& path) {
  Result<Config> config = LoadConfig(path);
  if (!config.ok()) std::cerr << "ampledger: " << config.status().message() << "\n";
  return config;
}

int Serve(const std::string& config_path, const std::string& log_level) {
  Result<Config> config = LoadOrReport(config_path);
  if (!config.ok()) return 2;
  const std::string& level = log_level.empty() ? config->log.level : log_level;
  if (Status logging = ConfigureLogging(level); !logging.ok()) {
    std::cerr << "ampledger: " << logging.message() << "\n";
    return 2;
  }
  spdlog::info("ampledger {} serving {} from {}", AMPLEDGER_VERSION, config->site.name,
               config_path);
  Service service(std::move(config).value());
  return RunUntilSignalled(service);
}

int Check(const std::string& config_path) {
  Result<Config> config = LoadOrReport(config_path);
  if (!config.ok()) return 2;
  // The tariff files were read with the config; building them checks them whole.
  Result<TariffSchedule> tariffs = TariffSchedule::Create(*config);
  if (!tariffs.ok()) {
    std::cerr << "ampledger: " << tariffs.status().message() << "\n";
    return 2;
  }
  std::cout << config_path << ": OK\n" << DescribeConfig(*config);
  return 0;
}

int Backup(const std::string& config_path, const std::string& to) {
  Result<Config> config = LoadOrReport(config_path);
  if (!config.ok()) return 2;
  if (Status status = BackupDatabase(config->storage.path, to); !status.ok()) {
    std::cerr << "ampledger: backup failed: " << status.ToString() << "\n";
    return 1;
  }
  std::cout << "backed up " << config->storage.path << " to " << to << "\n";
  return 0;
}

int Demo(const DemoOptions& options) {
  if (Status logging = ConfigureLogging("info"); !logging.ok()) return 2;
  Result<Config> config = PrepareDemo(options);
  if (!config.ok()) {
    std::cerr << "ampledger: demo: " << config.status().ToString() << "\n";
    return 1;
  }
  Service service(*config);
  DemoSimulator simulator(*config, options.udp_listen, DemoSimulatorOptions{});
  int exit_code = RunUntilSignalled(service, [&] {
    Status announced = AnnounceDemoToken(*config, options.http_listen);
    return announced.ok() ? simulator.Start() : announced;
  });
  simulator.Stop();
  return exit_code;
}

}  // namespace
}  // namespace ampledger

int main(int argc, char** argv) {
  using namespace ampledger;
  // The API serves each connection on a thread of its own (api/connection_pool.h), and glibc
  // gives threads malloc arenas of their own, up to eight per core, each keeping the memory
  // it freed. Two arenas keep the daemon's resident memory from drifting upward as
  // connection threads come and go (the soak of tests/reliability/REPORT.md).
  mallopt(M_ARENA_MAX, 2);
  // An API answer is thousands of small allocations and one large buffer. glibc's default
  // thresholds follow the largest block freed (up to 32 MiB), so after a few large answers
  // their buffers came from the arenas and the freed space stayed resident: under the soak,
  // resident memory moved between 25 and 32 MB while malloc's count of heap in use stayed at
  // 5.5 MB. Fixed thresholds keep blocks of 64 KiB and more in mappings of their own, given
  // back when freed, and trim an arena's free top beyond 128 KiB.
  mallopt(M_MMAP_THRESHOLD, 64 * 1024);
  mallopt(M_TRIM_THRESHOLD, 128 * 1024);
  CLI::App app{"ampledger: energy records, bills and alerts from clamp-on current sensors"};
  app.set_version_flag("--version", AMPLEDGER_VERSION);
  app.require_subcommand(0, 1);

  std::string config_path = kDefaultConfig;
  std::string log_level;
  auto* serve = app.add_subcommand("serve", "run the daemon");
  serve->add_option("--config,-c", config_path, "configuration file")->capture_default_str();
  serve->add_option("--log-level", log_level, "trace|debug|info|warn|error|off (overrides config)");

  auto* check = app.add_subcommand("check", "validate a configuration file and summarise it");
  check->add_option("--config,-c", config_path, "configuration file")->capture_default_str();

  std::string backup_to;
  auto* backup = app.add_subcommand("backup", "copy the live database with SQLite's online backup");
  backup->add_option("--config,-c", config_path, "configuration file")->capture_default_str();
  backup->add_option("--to", backup_to, "backup file to write")->required();

  DemoOptions demo_options;
  auto* demo = app.add_subcommand("demo", "run the daemon on the built-in example site (default)");
  demo->add_option("--http", demo_options.http_listen, "HTTP listen address")->capture_default_str();
  demo->add_option("--udp", demo_options.udp_listen, "UDP listen address")->capture_default_str();
  demo->add_option("--keep", demo_options.keep_dir, "keep the demo database in this folder");

  SendOptions send_options;
  auto* send = app.add_subcommand("send", "send one pack to a daemon as a node would, await its ack");
  send->add_option("--to", send_options.to, "daemon UDP address")->capture_default_str();
  send->add_option("--config,-c", send_options.config_path, "take the node's key from this config");
  send->add_option("--node", send_options.node, "node id")->required();
  send->add_option("--key", send_options.key_hex, "node key, 64 hex digits (instead of --config)");
  send->add_option("--format", send_options.format, "cose, cbor or json")->capture_default_str();
  send->add_option("--alg", send_options.alg, "COSE MAC: 256/64 or 256/256")->capture_default_str();
  send->add_option("--channel", send_options.channel, "channel id")->capture_default_str();
  send->add_option("--amps", send_options.amps, "RMS current, A")->required();
  send->add_option("--volts", send_options.volts, "RMS voltage, V");
  send->add_option("--watts", send_options.watts, "mean real power, W");
  send->add_option("--register-joules", send_options.register_joules, "energy register, J");
  send->add_option("--boot", send_options.boot, "boot counter")->capture_default_str();
  send->add_option("--seq", send_options.seq, "datagram counter")->capture_default_str();
  send->add_option("--interval", send_options.interval_seconds, "interval, s")->capture_default_str();

  CtPlanOptions plan;
  auto* ct_plan = app.add_subcommand("ct-plan", "choose a CT burden resistor for a node's ADC");
  ct_plan->add_option("--turns", plan.input.turns, "CT secondary turns (or the rated currents)");
  ct_plan->add_option("--rated-primary-amps", plan.input.rated_primary_amps,
                      "CT rated primary, A RMS");
  ct_plan->add_option("--rated-secondary-amps", plan.input.rated_secondary_amps,
                      "CT rated secondary output, A RMS (e.g. 0.05)");
  ct_plan->add_option("--max-primary-amps", plan.input.max_primary_amps,
                      "largest primary current to read, A RMS")->required();
  ct_plan->add_option("--adc-bits", plan.input.adc_bits, "ADC resolution")->capture_default_str();
  ct_plan->add_option("--adc-reference-volts", plan.input.adc_reference_volts, "ADC reference")
      ->capture_default_str();
  ct_plan->add_option("--bias-volts", plan.input.bias_volts,
                      "ADC input bias (default: half the reference)");
  ct_plan->add_option("--nominal-volts", plan.input.nominal_volts, "site's nominal voltage")
      ->capture_default_str();
  ct_plan->add_option("--series", plan.series_name, "E12, E24 or E96 (IEC 60063)")
      ->capture_default_str();
  ct_plan->add_option("--bias-bottom-ohms", plan.input.bias_bottom_ohms,
                      "bias divider's lower resistor")->capture_default_str();

  NodeAddOptions node_add_options;
  auto* node = app.add_subcommand("node", "manage sensor nodes");
  node->require_subcommand(1);
  auto* node_add = node->add_subcommand("add", "make a node key file, print its config snippet");
  node_add->add_option("--config,-c", node_add_options.config_path,
                       "configuration file; the key goes beside it")->required();
  node_add->add_option("--id", node_add_options.node_id, "node id")->required();
  node_add->add_option("--channels", node_add_options.channels, "CT inputs on the node")
      ->capture_default_str();
  node_add->add_option("--owner", node_add_options.owner, "user to own the key file (the daemon)");

  CalibrateOptions calibrate_options;
  auto* calibrate = app.add_subcommand("calibrate", "compute a channel's gain from a reference");
  calibrate->add_option("--measured-amps", calibrate_options.measured_amps,
                        "what ampledger showed")->required();
  calibrate->add_option("--current-gain", calibrate_options.current_gain,
                        "the channel's gain meanwhile")->capture_default_str();
  calibrate->add_option("--reference-amps", calibrate_options.reference_amps,
                        "a reference meter's reading");
  calibrate->add_option("--load-watts", calibrate_options.load_watts,
                        "known resistive load: rated W");
  calibrate->add_option("--load-rated-volts", calibrate_options.load_rated_volts,
                        "... at this voltage");
  calibrate->add_option("--line-volts", calibrate_options.line_volts,
                        "line voltage measured during the test");

  TokenOptions token_options;
  auto* token = app.add_subcommand("token", "manage API bearer tokens");
  token->require_subcommand(1);
  auto* token_create = token->add_subcommand("create", "make a token and print it once");
  token_create->add_option("--config,-c", token_options.config_path, "configuration file")
      ->required();
  token_create->add_option("--scope", token_options.scope, "admin, viewer or unit:<unit id>")
      ->required();
  token_create->add_option("--label", token_options.label, "who or what holds the token");
  auto* token_list = token->add_subcommand("list", "list tokens (never the tokens themselves)");
  token_list->add_option("--config,-c", token_options.config_path, "configuration file")
      ->required();
  auto* token_revoke = token->add_subcommand("revoke", "stop a token from working");
  token_revoke->add_option("--config,-c", token_options.config_path, "configuration file")
      ->required();
  token_revoke->add_option("id", token_options.id, "the token's id (from token list)")
      ->required();

  MeterReadOptions meter_options;
  meter_options.config_path = kDefaultConfig;
  auto* meter_read = app.add_subcommand("meter-read", "main (utility) meter reads, typed in");
  meter_read->require_subcommand(1);
  auto* meter_add = meter_read->add_subcommand("add", "store a register or period read");
  meter_add->add_option("--config,-c", meter_options.config_path, "configuration file")
      ->capture_default_str();
  meter_add->add_option("--register", meter_options.register_kwh, "the meter's kWh register");
  meter_add->add_option("--at", meter_options.at, "when the register was read");
  meter_add->add_option("--kwh", meter_options.period_kwh, "kWh used over a period");
  meter_add->add_option("--from", meter_options.from, "the period's start");
  meter_add->add_option("--to", meter_options.to, "the period's end");
  meter_add->add_option("--source", meter_options.source, "who or what gave the read")
      ->capture_default_str();
  auto* meter_list = meter_read->add_subcommand("list", "list the stored reads");
  meter_list->add_option("--config,-c", meter_options.config_path, "configuration file")
      ->capture_default_str();
  auto* meter_remove = meter_read->add_subcommand("remove", "delete a read typed in by mistake");
  meter_remove->add_option("--config,-c", meter_options.config_path, "configuration file")
      ->capture_default_str();
  meter_remove->add_option("id", meter_options.id, "the read's id (from meter-read list)")
      ->required();

  StatementOptions statement_options;
  statement_options.config_path = kDefaultConfig;
  auto* statement = app.add_subcommand("statement", "a billing cycle's statement for a unit");
  statement->add_option("--config,-c", statement_options.config_path, "configuration file")
      ->capture_default_str();
  statement->add_option("--unit", statement_options.unit, "unit id (default: every unit)");
  statement->add_option("--cycle", statement_options.cycle, "the cycle starting in YYYY-MM")
      ->required();
  statement->add_option("--format", statement_options.format, "text, json, csv or html")
      ->capture_default_str();
  statement->add_option("--db", statement_options.db_path,
                        "database to read (default: the config's storage.path)");

  EspiImportOptions espi_import_options;
  espi_import_options.config_path = kDefaultConfig;
  auto* espi_import =
      app.add_subcommand("espi-import", "import the utility's ESPI interval data for the main meter");
  espi_import->add_option("--config,-c", espi_import_options.config_path, "configuration file")
      ->capture_default_str();
  espi_import->add_option("file", espi_import_options.file, "ESPI (Green Button) XML file")
      ->required();
  espi_import->add_flag("--replace", espi_import_options.replace,
                        "take the file's value where a stored interval differs");
  EspiExportOptions espi_export_options;
  espi_export_options.config_path = kDefaultConfig;
  auto* espi_export =
      app.add_subcommand("espi-export", "a unit's or circuit's interval energy as ESPI XML");
  espi_export->add_option("--config,-c", espi_export_options.config_path, "configuration file")
      ->capture_default_str();
  espi_export->add_option("--unit", espi_export_options.unit, "unit id");
  espi_export->add_option("--circuit", espi_export_options.circuit, "circuit id");
  espi_export->add_option("--from", espi_export_options.from, "start: RFC 3339 or YYYY-MM-DD")
      ->required();
  espi_export->add_option("--to", espi_export_options.to, "end: RFC 3339 or YYYY-MM-DD")
      ->required();
  espi_export->add_option("--interval", espi_export_options.interval_s, "900 or 3600 seconds")
      ->capture_default_str();
  espi_export->add_option("--output,-o", espi_export_options.output, "file (default: stdout)");
  espi_export->add_option("--db", espi_export_options.db_path,
                          "database to read (default: the config's storage.path)");

  CLI11_PARSE(app, argc, argv);
  if (*serve) return Serve(config_path, log_level);
  if (*check) return Check(config_path);
  if (*backup) return Backup(config_path, backup_to);
  if (*send) return RunSend(send_options, std::cout, std::cerr);
  if (*ct_plan) return RunCtPlan(plan, std::cout, std::cerr);
  if (*node_add) return RunNodeAdd(node_add_options, std::cout, std::cerr);
  if (*calibrate) return RunCalibrate(calibrate_options, std::cout, std::cerr);
  if (*token_create) return RunTokenCreate(token_options, std::cout, std::cerr);
  if (*token_list) return RunTokenList(token_options, std::cout, std::cerr);
  if (*token_revoke) return RunTokenRevoke(token_options, std::cout, std::cerr);
  if (*meter_add) return RunMeterReadAdd(meter_options, std::cout, std::cerr);
  if (*meter_list) return RunMeterReadList(meter_options, std::cout, std::cerr);
  if (*meter_remove) return RunMeterReadRemove(meter_options, std::cout, std::cerr);
  if (*statement) return RunStatement(statement_options, std::cout, std::cerr);
  if (*espi_import) return RunEspiImport(espi_import_options, std::cout, std::cerr);
  if (*espi_export) return RunEspiExport(espi_export_options, std::cout, std::cerr);
  return Demo(demo_options);  // `ampledger demo`, and `ampledger` alone
}
