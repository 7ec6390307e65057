// tests/reliability/kill_restart.cpp
// Crash safety under load. `ampledger serve` runs as a real process on 127.0.0.1 and takes
// COSE_Mac0 packs from four nodes that keep what is unacknowledged and resend it (NodeClient,
// as a node's firmware would); it is killed with SIGKILL at random moments and restarted at
// once, `kills` times. Then, with the daemon stopped:
//   - every pack sent was acknowledged, and the database holds exactly its readings (none lost,
//     none twice: an acknowledgement is sent only after the commit is durable);
//   - PRAGMA integrity_check answers ok;
//   - the stored 15-minute rollups of every circuit equal a recomputation from the raw readings.
// Prints its figures as markdown; exits 0 only if every check holds.
// Run on demand (tests/reliability/run.sh runs it):
//   kill_restart AMPLEDGER_BINARY [kills, default 20] [seed, default 1]
#include <signal.h>
#include <sys/socket.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <random>
#include <string>
#include <thread>
#include <vector>

#include "config/wall_clock.h"
#include "daemon/ingest/node_client.h"
#include "process_util.h"
#include "storage/database.h"
#include "storage/queries.h"
#include "storage/rollup_recompute.h"
#include "storage/series.h"

namespace ampledger {
namespace {

constexpr int kNodes = 4;
constexpr int kChannels = 8;
constexpr const char* kKeyHex = "c0ffee00c0ffee00c0ffee00c0ffee00c0ffee00c0ffee00c0ffee00c0ffee00";
constexpr UnixMs kIntervalMs = 1000;

std::string NodeId(int n) { return "cellar" + std::to_string(n); }

std::string ConfigToml(int udp_port, int http_port) {
  std::string toml =
      "[site]\nname = \"Crash test\"\ntime_zone = \"Europe/Vienna\"\nnominal_volts = [230]\n"
      "currency = \"EUR\"\n";
  for (int n = 0; n < kNodes; ++n) {
    toml += "\n[[node]]\nid = \"" + NodeId(n) + "\"\nkey = \"" + kKeyHex + "\"\n";
    for (int c = 1; c <= kChannels; ++c) {
      toml += "[[node.channel]]\nid = \"ct" + std::to_string(c) + "\"\n";
    }
  }
  for (int n = 0; n < kNodes; ++n) {
    for (int c = 1; c <= kChannels; ++c) {
      toml += "\n[[circuit]]\nid = \"load" + std::to_string(n) + "-" + std::to_string(c) +
              "\"\nchannels = [\"" + NodeId(n) + "/ct" + std::to_string(c) + "\"]\n";
    }
  }
  toml += "\n[storage]\npath = \"site.db\"\n\n[ingest]\nlisten = \"127.0.0.1:" +
          std::to_string(udp_port) + "\"\n\n[http]\nlisten = \"127.0.0.1:" +
          std::to_string(http_port) + "\"\n\n[log]\nlevel = \"warn\"\n";
  return toml;
}

// A fresh folder under the system temp dir, removed with its contents at the end.
class ScratchDir {
 public:
  ScratchDir() {
    std::string pattern = (std::filesystem::temp_directory_path() / "ampledger-crash-XXXXXX").string();
    if (::mkdtemp(pattern.data()) != nullptr) path_ = pattern;
  }
  ~ScratchDir() {
    std::error_code ignored;
    if (!path_.empty()) std::filesystem::remove_all(path_, ignored);
  }
  std::string File(const std::string& name) const { return (path_ / name).string(); }

 private:
  std::filesystem::path path_;
};

std::string ReadText(const std::string& path) {
  std::ifstream in(path);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// The first column of the first row of `sql`, as text; an error's message if it fails.
std::string QueryText(const std::string& db_path, const std::string& sql) {
  Result<std::unique_ptr<Database>> db = Database::OpenReader(db_path);
  if (!db.ok()) return db.status().ToString();
  Result<Statement> query = (*db)->Prepare(sql);
  if (!query.ok()) return query.status().ToString();
  Result<bool> row = query->Step(sql);
  if (!row.ok()) return row.status().ToString();
  return *row ? query->Text(0) : std::string("no row");
}

struct SenderTotals {
  std::uint64_t sent = 0;
  std::uint64_t acked = 0;
  bool drained = false;
};

// One node: sends a pack every 2 ms while `running`, keeping and resending the unacknowledged
// ones; then waits up to 60 s for every acknowledgement.
void RunNode(int n, int udp_port, UnixMs first_end_ms, const std::atomic<bool>& running,
             SenderTotals* totals) {
  std::string key;
  for (int i = 0; i < 32; ++i) key.push_back(static_cast<char>(std::stoi(std::string(kKeyHex + 2 * i, 2), nullptr, 16)));
  NodeClientOptions options;
  options.node = NodeId(n);
  options.key = key;
  options.resend_after_ms = 300;
  auto client = NodeClient::Open("127.0.0.1:" + std::to_string(udp_port), options);
  if (!client.ok()) return;
  NodeClient& node = **client;
  std::uint32_t seq = 0;
  double register_j[kChannels + 1] = {};
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
    if (node.unacked() + node.acked() > held) ++totals->sent;
    node.PollAcks(0);
    node.ResendDue(64);
    std::this_thread::sleep_for(std::chrono::milliseconds(2));
  }
  const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(60);
  while (node.unacked() > 0 && std::chrono::steady_clock::now() < until) {
    node.PollAcks(50);
    node.ResendDue(256);
  }
  totals->acked = node.acked();
  totals->drained = node.unacked() == 0;
}

struct RollupCheck {
  int buckets = 0;
  int mismatches = 0;
};

bool Near(double a, double b) { return std::fabs(a - b) <= 1e-9 * std::max(1.0, std::fabs(b)); }

RollupCheck CompareRollups(const Config& config, UnixMs from_ms, UnixMs to_ms) {
  RollupCheck check;
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  if (!db.ok()) return {0, 1};
  Result<SeriesMap> series = RegisterSeries(**db, config);
  if (!series.ok()) return {0, 1};
  const UnixMs max_gap_ms = static_cast<UnixMs>(config.site.max_gap_seconds * 1000);
  for (int circuit = 0; circuit < series->CircuitCount(); ++circuit) {
    auto stored = ReadCircuitBuckets(**db, *series, circuit, from_ms, to_ms);
    auto fresh = RecomputeCircuitBuckets(**db, *series, circuit, from_ms, to_ms, max_gap_ms);
    if (!stored.ok() || !fresh.ok() || stored->size() != fresh->size()) {
      ++check.mismatches;
      continue;
    }
    for (std::size_t i = 0; i < fresh->size(); ++i) {
      const CircuitBucket& s = stored->at(i);
      const CircuitBucket& f = fresh->at(i);
      ++check.buckets;
      // Sums taken in another order differ in the last bits only.
      if (s.start_ms != f.start_ms || !Near(s.real_wh, f.real_wh) ||
          !Near(s.apparent_vah, f.apparent_vah) || !Near(s.coverage, f.coverage) ||
          s.quality != f.quality) {
        ++check.mismatches;
      }
    }
  }
  return check;
}

int Main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: kill_restart AMPLEDGER_BINARY [kills] [seed]\n");
    return 2;
  }
  const std::string binary = argv[1];
  const int kills = argc > 2 ? std::stoi(argv[2]) : 20;
  std::mt19937 random(argc > 3 ? std::stoul(argv[3]) : 1);

  ScratchDir dir;
  const int udp_port = testing::FreeLoopbackPort(SOCK_DGRAM);
  const int http_port = testing::FreeLoopbackPort(SOCK_STREAM);
  const std::string config_path = dir.File("site.toml");
  std::ofstream(config_path) << ConfigToml(udp_port, http_port);
  const std::string log_path = dir.File("serve.log");
  const std::vector<std::string> serve = {binary, "serve", "--config", config_path};

  pid_t daemon = testing::SpawnProcess(serve, log_path);
  if (daemon <= 0 || !testing::WaitHealthy(http_port, std::chrono::seconds(20))) {
    std::fprintf(stderr, "kill_restart: the daemon did not start:\n%s\n",
                 ReadText(log_path).c_str());
    return 1;
  }

  // Intervals from six days ago: every pack stays inside the resend horizon (7 days).
  const UnixMs first_end_ms = (WallClockMs() - 6 * 86'400'000LL) / 1000 * 1000;
  std::atomic<bool> running{true};
  std::vector<SenderTotals> totals(kNodes);
  std::vector<std::thread> nodes;
  for (int n = 0; n < kNodes; ++n) {
    nodes.emplace_back(RunNode, n, udp_port, first_end_ms, std::cref(running), &totals[n]);
  }

  std::uniform_int_distribution<int> load_ms(200, 1500);
  std::vector<double> restart_ms;
  bool restarted = true;
  const auto started = std::chrono::steady_clock::now();
  for (int k = 0; k < kills && restarted; ++k) {
    std::this_thread::sleep_for(std::chrono::milliseconds(load_ms(random)));
    ::kill(daemon, SIGKILL);
    testing::WaitExit(daemon, std::chrono::seconds(10));
    const auto killed_at = std::chrono::steady_clock::now();
    daemon = testing::SpawnProcess(serve, log_path);
    restarted = daemon > 0 && testing::WaitHealthy(http_port, std::chrono::seconds(20));
    restart_ms.push_back(std::chrono::duration<double, std::milli>(
                             std::chrono::steady_clock::now() - killed_at)
                             .count());
  }
  std::this_thread::sleep_for(std::chrono::milliseconds(500));
  running.store(false);
  for (std::thread& node : nodes) node.join();
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  ::kill(daemon, SIGTERM);
  const int exit_code = testing::WaitExit(daemon, std::chrono::seconds(30));

  std::uint64_t sent = 0, acked = 0;
  bool drained = true;
  for (const SenderTotals& t : totals) {
    sent += t.sent;
    acked += t.acked;
    drained = drained && t.drained;
  }
  const std::string db_path = dir.File("site.db");
  const std::int64_t stored =
      std::strtoll(QueryText(db_path, "SELECT count(*) FROM reading").c_str(), nullptr, 10);
  const std::string integrity = QueryText(db_path, "PRAGMA integrity_check");
  Result<Config> config = LoadConfig(config_path);
  RollupCheck rollups;
  if (config.ok()) {
    rollups = CompareRollups(*config, first_end_ms - 86'400'000, WallClockMs() + 86'400'000);
  } else {
    rollups.mismatches = 1;
  }

  std::sort(restart_ms.begin(), restart_ms.end());
  const double median = restart_ms.empty() ? 0 : restart_ms[restart_ms.size() / 2];
  const double slowest = restart_ms.empty() ? 0 : restart_ms.back();
  const std::uint64_t expected = acked * kChannels;
  const bool ok = restarted && drained && acked == sent &&
                  stored == static_cast<std::int64_t>(expected) && integrity == "ok" &&
                  rollups.mismatches == 0 && rollups.buckets > 0 && exit_code == 0;

  std::printf("### Crash: SIGKILL under load (`kill_restart %s %d`)\n\n", binary.c_str(), kills);
  std::printf("- %d kills and restarts in %.1f s of load from %d nodes x %d channels "
              "(packs every 2 ms per node, resent until acknowledged)\n",
              static_cast<int>(restart_ms.size()), seconds, kNodes, kChannels);
  std::printf("- restart to healthy after SIGKILL: median %.0f ms, slowest %.0f ms\n", median,
              slowest);
  std::printf("- packs sent %llu, acknowledged %llu%s; readings expected %llu, stored %lld: %s\n",
              static_cast<unsigned long long>(sent), static_cast<unsigned long long>(acked),
              drained ? "" : " (NOT all drained)", static_cast<unsigned long long>(expected),
              static_cast<long long>(stored),
              stored == static_cast<std::int64_t>(expected) ? "none lost, none doubled" : "MISMATCH");
  std::printf("- PRAGMA integrity_check: %s\n", integrity.c_str());
  std::printf("- rollups vs recomputation from raw: %d buckets of %d circuits, %d mismatches\n",
              rollups.buckets, kNodes * kChannels, rollups.mismatches);
  std::printf("- final SIGTERM: exit %d\n", exit_code);
  std::printf("- result: %s\n\n", ok ? "PASS" : "FAIL");
  if (!ok) std::fprintf(stderr, "serve log:\n%s\n", ReadText(log_path).c_str());
  return ok ? 0 : 1;
}

}  // namespace
}  // namespace ampledger

int main(int argc, char** argv) { return ampledger::Main(argc, argv); }
