// tests/reliability/kill_restart.cpp
// Crash safety under load. `ampledger serve` runs as a real process on 127.0.0.1 and takes
// COSE_Mac0 packs from five nodes that keep what is unacknowledged and resend it (NodeClient,
// as a node's firmware would); it is killed with SIGKILL at random moments and restarted at
// once, `kills` times. Then, with the daemon stopped:
//   - every pack sent was acknowledged, and the database holds exactly its readings (none lost,
//     none twice: an acknowledgement is sent only after the commit is durable);
//   - PRAGMA integrity_check answers ok;
//   - the stored 15-minute rollups of every circuit equal a recomputation from the raw readings,
//     and so do the daily rollups;
//   - no alert event is doubled or missing: a fifth node, sending one pack at a time, feeds
//     power_above and cycle_done rules, and the events stored equal a replay of its stored
//     readings through the same rules (alert_check.h).
// Prints its figures as markdown; exits 0 only if every check holds.
// Run on demand (tests/reliability/run.sh runs it):
//   kill_restart AMPLEDGER_BINARY [kills, default 20] [seed, default 1]
#include <algorithm>
#include <atomic>
#include <chrono>
#include <cstdio>
#include <random>
#include <string>
#include <thread>
#include <vector>

#include "config/config.h"
#include "tests/reliability/alert_check.h"
#include "tests/reliability/rollup_check.h"
#include "tests/reliability/served_site.h"

namespace ampledger::reliability {
namespace {

constexpr int kNodes = 4;  // with windows of 512 packs; node kNodes sends one at a time

// Rules on the one-at-a-time node's circuits. Its channel c reads 40 x c + (seq % 17) W, so a
// level of 40 x c + 8 W is crossed twice in every 17 packs: above it at seq % 17 >= 9, below
// at seq % 17 <= 7. Each circuit gets a power_above rule (raised, cleared) and a cycle_done
// rule (cycle_finished, with the run's energy) at that level.
std::string AlertRules() {
  std::string toml;
  for (int c = 1; c <= kChannels; ++c) {
    const std::string circuit = "load" + std::to_string(kNodes) + "-" + std::to_string(c);
    const std::string level = std::to_string(40 * c + 8);
    toml += "\n[[alert]]\nid = \"over-" + std::to_string(c) + "\"\nkind = \"power_above\"\n"
            "circuits = [\"" + circuit + "\"]\nlevel_watts = " + level + "\n";
    toml += "\n[[alert]]\nid = \"run-" + std::to_string(c) + "\"\nkind = \"cycle_done\"\n"
            "circuits = [\"" + circuit + "\"]\nlevel_watts = " + level + "\n";
  }
  return toml;
}

int Main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: kill_restart AMPLEDGER_BINARY [kills] [seed]\n");
    return 2;
  }
  const std::string binary = argv[1];
  const int kills = argc > 2 ? std::stoi(argv[2]) : 20;
  std::mt19937 random(argc > 3 ? std::stoul(argv[3]) : 1);

  ServedSite site(binary, kNodes + 1, "site.db", AlertRules());
  if (!site.Start()) {
    std::fprintf(stderr, "kill_restart: the daemon did not start:\n%s\n",
                 ReadText(site.log_path()).c_str());
    return 1;
  }

  // Intervals from six days ago: every pack stays inside the resend horizon (7 days).
  const UnixMs first_end_ms = (WallClockMs() - 6 * 86'400'000LL) / 1000 * 1000;
  std::atomic<bool> running{true};
  std::vector<NodeTotals> totals(kNodes + 1);
  std::vector<std::thread> nodes;
  for (int n = 0; n <= kNodes; ++n) {
    nodes.emplace_back([&, n] {
      totals[n] = RunNode(n, site.udp_port(), first_end_ms, std::chrono::milliseconds(2), running,
                          /*paced=*/false, /*max_unacked=*/n == kNodes ? 1 : 512);
    });
  }

  std::uniform_int_distribution<int> load_ms(200, 1500);
  std::vector<double> restart_ms;
  bool restarted = true;
  const auto started = std::chrono::steady_clock::now();
  for (int k = 0; k < kills && restarted; ++k) {
    std::this_thread::sleep_for(std::chrono::milliseconds(load_ms(random)));
    site.Kill();
    const auto killed_at = std::chrono::steady_clock::now();
    restarted = site.Start();
    restart_ms.push_back(std::chrono::duration<double, std::milli>(
                             std::chrono::steady_clock::now() - killed_at)
                             .count());
  }
  std::this_thread::sleep_for(std::chrono::milliseconds(500));
  running.store(false);
  for (std::thread& node : nodes) node.join();
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  const int exit_code = site.Stop();

  std::uint64_t sent = 0, acked = 0;
  bool drained = true;
  for (const NodeTotals& t : totals) {
    sent += t.packs;
    acked += t.acked;
    drained = drained && t.drained;
  }
  const std::int64_t stored =
      std::strtoll(QueryText(site.db_path(), "SELECT count(*) FROM reading").c_str(), nullptr, 10);
  const std::string integrity = QueryText(site.db_path(), "PRAGMA integrity_check");
  Result<Config> config = LoadConfig(site.config_path());
  RollupCheck rollups, days;
  AlertCheck alerts;
  if (config.ok()) {
    alerts = CompareAlertEvents(*config, NodeId(kNodes));
    rollups = CompareRollups(*config, first_end_ms - 86'400'000, WallClockMs() + 86'400'000);
    days = CompareDailyRollups(*config, first_end_ms - 86'400'000, WallClockMs() + 86'400'000);
  } else {
    rollups.mismatches = days.mismatches = alerts.mismatches = 1;
  }

  std::sort(restart_ms.begin(), restart_ms.end());
  const double median = restart_ms.empty() ? 0 : restart_ms[restart_ms.size() / 2];
  const double slowest = restart_ms.empty() ? 0 : restart_ms.back();
  const std::uint64_t expected = acked * kChannels;
  const bool ok = restarted && drained && acked == sent &&
                  stored == static_cast<std::int64_t>(expected) && integrity == "ok" &&
                  rollups.mismatches == 0 && rollups.buckets > 0 && days.mismatches == 0 &&
                  days.buckets > 0 && alerts.mismatches == 0 && alerts.expected > 0 &&
                  exit_code == 0;

  std::printf("### Crash: SIGKILL under load (`kill_restart %s %d`)\n\n", binary.c_str(), kills);
  std::printf("- %d kills and restarts in %.1f s of load from %d nodes x %d channels "
              "(a pack every 2 ms per node, resent until acknowledged; %d nodes with a window "
              "of 512 packs, one sending one pack at a time)\n",
              static_cast<int>(restart_ms.size()), seconds, kNodes + 1, kChannels, kNodes);
  std::printf("- restart to healthy after SIGKILL: median %.0f ms, slowest %.0f ms\n", median,
              slowest);
  std::printf("- packs sent %llu, acknowledged %llu%s; readings expected %llu, stored %lld: %s\n",
              static_cast<unsigned long long>(sent), static_cast<unsigned long long>(acked),
              drained ? "" : " (NOT all drained)", static_cast<unsigned long long>(expected),
              static_cast<long long>(stored),
              stored == static_cast<std::int64_t>(expected) ? "none lost, none doubled" : "MISMATCH");
  std::printf("- PRAGMA integrity_check: %s\n", integrity.c_str());
  std::printf("- rollups vs recomputation from raw: %d buckets of %d circuits, %d mismatches\n",
              rollups.buckets, (kNodes + 1) * kChannels, rollups.mismatches);
  std::printf("- daily rollups vs recomputation from raw: %d circuit-days, %d mismatches\n",
              days.buckets, days.mismatches);
  std::printf("- alert events vs a replay of the stored readings through the same rules: %d "
              "expected, %d stored, %d mismatches (%s)\n",
              alerts.expected, alerts.stored, alerts.mismatches,
              alerts.mismatches == 0 ? "none doubled, none missing" : "MISMATCH");
  std::printf("- final SIGTERM: exit %d\n", exit_code);
  std::printf("- result: %s\n\n", ok ? "PASS" : "FAIL");
  if (!ok) std::fprintf(stderr, "serve log:\n%s\n", ReadText(site.log_path()).c_str());
  return ok ? 0 : 1;
}

}  // namespace
}  // namespace ampledger::reliability

int main(int argc, char** argv) { return ampledger::reliability::Main(argc, argv); }
