// tests/reliability/served_site.h
// What the reliability tools share: a site of N nodes x 8 channels (one circuit per channel)
// in a scratch folder, served by `ampledger serve` as a child process on free loopback ports,
// and a node that sends a pack every few milliseconds, keeping and resending what is not yet
// acknowledged, as a node's firmware would. Header-only; each tool is one executable.
#pragma once

#include <signal.h>
#include <stdio.h>
#include <sys/socket.h>

#include <atomic>
#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include "config/wall_clock.h"
#include "daemon/ingest/node_client.h"
#include "process_util.h"
#include "storage/database.h"

namespace ampledger::reliability {

inline constexpr int kChannels = 8;
inline constexpr UnixMs kIntervalMs = 1000;
inline constexpr const char* kKeyHex =
    "c0ffee00c0ffee00c0ffee00c0ffee00c0ffee00c0ffee00c0ffee00c0ffee00";

inline std::string NodeId(int n) { return "cellar" + std::to_string(n); }

inline std::string NodeKey() {
  std::string key;
  for (int i = 0; i < 32; ++i) {
    key.push_back(static_cast<char>(std::stoi(std::string(kKeyHex + 2 * i, 2), nullptr, 16)));
  }
  return key;
}

inline std::string ReadText(const std::string& path) {
  std::ifstream in(path);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// The first column of the first row of `sql` as text, or the error's message.
inline std::string QueryText(const std::string& db_path, const std::string& sql) {
  Result<std::unique_ptr<Database>> db = Database::OpenReader(db_path);
  if (!db.ok()) return db.status().ToString();
  Result<Statement> query = (*db)->Prepare(sql);
  if (!query.ok()) return query.status().ToString();
  Result<bool> row = query->Step(sql);
  if (!row.ok()) return row.status().ToString();
  return *row ? query->Text(0) : std::string("no row");
}

class ServedSite {
 public:
  // The database is `db_name` in the site's folder (e.g. in a subfolder the caller mounts);
  // the folder is removed with its contents when this is destroyed. `more_toml` is appended
  // to the config (alert rules, say).
  ServedSite(std::string binary, int nodes, std::string db_name = "site.db",
             std::string more_toml = "")
      : binary_(std::move(binary)),
        nodes_(nodes),
        db_name_(std::move(db_name)),
        more_toml_(std::move(more_toml)) {
    std::string pattern =
        (std::filesystem::temp_directory_path() / "ampledger-reliability-XXXXXX").string();
    if (::mkdtemp(pattern.data()) != nullptr) dir_ = pattern;
    udp_port_ = testing::FreeLoopbackPort(SOCK_DGRAM);
    http_port_ = testing::FreeLoopbackPort(SOCK_STREAM);
    std::ofstream(config_path()) << ConfigToml();
  }
  ~ServedSite() {
    if (pid_ > 0) Kill();
    std::error_code ignored;
    if (!dir_.empty()) std::filesystem::remove_all(dir_, ignored);
  }
  ServedSite(const ServedSite&) = delete;
  ServedSite& operator=(const ServedSite&) = delete;

  // Starts `ampledger serve`; true once /v1/health answers.
  bool Start() {
    pid_ = testing::SpawnProcess({binary_, "serve", "--config", config_path()}, log_path());
    return pid_ > 0 && testing::WaitHealthy(http_port_, std::chrono::seconds(20));
  }
  void Kill() {
    ::kill(pid_, SIGKILL);
    testing::WaitExit(pid_, std::chrono::seconds(10));
    pid_ = -1;
  }
  // SIGTERM; the exit code (see testing::WaitExit).
  int Stop() {
    ::kill(pid_, SIGTERM);
    const int code = testing::WaitExit(pid_, std::chrono::seconds(30));
    pid_ = -1;
    return code;
  }

  // A new API token of `scope` from `ampledger token create`; "" on failure.
  std::string CreateToken(const std::string& scope) const {
    const std::string command = binary_ + " token create --scope " + scope + " --config " +
                                config_path() + " 2>/dev/null";
    std::string token;
    if (FILE* out = ::popen(command.c_str(), "r")) {
      char line[256];
      if (std::fgets(line, sizeof line, out) != nullptr) token = line;
      ::pclose(out);
    }
    while (!token.empty() && (token.back() == '\n' || token.back() == '\r')) token.pop_back();
    return token;
  }

  pid_t pid() const { return pid_; }
  int udp_port() const { return udp_port_; }
  int http_port() const { return http_port_; }
  int nodes() const { return nodes_; }
  std::string File(const std::string& name) const { return (dir_ / name).string(); }
  std::string config_path() const { return File("site.toml"); }
  std::string db_path() const { return File(db_name_); }
  std::string log_path() const { return File("serve.log"); }

 private:
  std::string ConfigToml() const {
    std::string toml =
        "[site]\nname = \"Reliability run\"\ntime_zone = \"Europe/Vienna\"\n"
        "nominal_volts = [230]\ncurrency = \"EUR\"\n";
    for (int n = 0; n < nodes_; ++n) {
      toml += "\n[[node]]\nid = \"" + NodeId(n) + "\"\nkey = \"" + kKeyHex + "\"\n";
      for (int c = 1; c <= kChannels; ++c) {
        toml += "[[node.channel]]\nid = \"ct" + std::to_string(c) + "\"\n";
      }
    }
    for (int n = 0; n < nodes_; ++n) {
      for (int c = 1; c <= kChannels; ++c) {
        toml += "\n[[circuit]]\nid = \"load" + std::to_string(n) + "-" + std::to_string(c) +
                "\"\nchannels = [\"" + NodeId(n) + "/ct" + std::to_string(c) + "\"]\n";
      }
    }
    toml += "\n[storage]\npath = \"" + db_name_ + "\"\n\n[ingest]\nlisten = \"127.0.0.1:" +
            std::to_string(udp_port_) + "\"\n\n[http]\nlisten = \"127.0.0.1:" +
            std::to_string(http_port_) +
            "\"\n\n[log]\nlevel = \"warn\"\n";
    return toml + more_toml_;
  }

  std::string binary_;
  int nodes_;
  std::string db_name_;
  std::string more_toml_;
  std::filesystem::path dir_;
  int udp_port_ = 0;
  int http_port_ = 0;
  pid_t pid_ = -1;
};

struct NodeTotals {
  std::uint64_t packs = 0;  // packs the node made and kept until acknowledged
  std::uint64_t acked = 0;
  bool drained = false;     // every pack acknowledged in the end
};

// Node n of `site`: one pack of every channel (real power, current, energy register) every
// `every` while `running`, with times of consecutive 1-second intervals from `first_end_ms`;
// keeps and resends the unacknowledged; then waits up to 60 s for every acknowledgement.
// `paced`: pack k goes out at start + k x `every` (a steady rate, as a node's clock keeps),
// rather than `every` after the previous send. `max_unacked` is the node's window: with 1 it
// sends the next pack only after the last was acknowledged, so its readings arrive in order.
inline NodeTotals RunNode(int n, int udp_port, UnixMs first_end_ms,
                          std::chrono::microseconds every, const std::atomic<bool>& running,
                          bool paced = false, std::size_t max_unacked = 512) {
  NodeTotals totals;
  NodeClientOptions options;
  options.node = NodeId(n);
  options.key = NodeKey();
  options.resend_after_ms = 300;
  options.max_unacked = max_unacked;
  auto client = NodeClient::Open("127.0.0.1:" + std::to_string(udp_port), options);
  if (!client.ok()) return totals;
  NodeClient& node = **client;
  std::uint32_t seq = 0;
  double register_j[kChannels + 1] = {};
  const auto started = std::chrono::steady_clock::now();
  while (running.load()) {
    ++seq;
    NodePack pack{NodeId(n), 1, seq, static_cast<std::int32_t>(kIntervalMs), {}};
    for (int c = 1; c <= kChannels; ++c) {
      ChannelSample& s = pack.samples.emplace_back();
      s.channel = "ct" + std::to_string(c);
      s.end_ms = first_end_ms + static_cast<UnixMs>(seq) * kIntervalMs;
      s.duration_ms = static_cast<std::int32_t>(kIntervalMs);
      s.real_watts = 40.0 * c + (seq % 17);
      s.amps = *s.real_watts / 230;
      register_j[c] += *s.real_watts * kIntervalMs / 1000.0;
      s.real_register_j = register_j[c];
    }
    // Unavailable: the window is full (the pack was not kept: try again) or the daemon is
    // down (kept: trying again replaces it with the same bytes).
    const std::uint64_t held = node.unacked() + node.acked();
    while (!node.Send(pack).ok() && running.load()) {
      node.PollAcks(10);
      node.ResendDue(64);
    }
    if (node.unacked() + node.acked() > held) ++totals.packs;
    node.PollAcks(0);
    node.ResendDue(64);
    if (paced) {
      std::this_thread::sleep_until(started + every * seq);
    } else {
      std::this_thread::sleep_for(every);
    }
  }
  const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(60);
  while (node.unacked() > 0 && std::chrono::steady_clock::now() < until) {
    node.PollAcks(50);
    node.ResendDue(256);
  }
  totals.acked = node.acked();
  totals.drained = node.unacked() == 0;
  return totals;
}

// Resident memory of `pid` in KiB (VmRSS), or -1.
inline long ResidentKiB(pid_t pid) {
  std::ifstream status("/proc/" + std::to_string(pid) + "/status");
  std::string line;
  while (std::getline(status, line)) {
    if (line.rfind("VmRSS:", 0) == 0) return std::strtol(line.c_str() + 6, nullptr, 10);
  }
  return -1;
}

}  // namespace ampledger::reliability
