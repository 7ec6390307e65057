// tests/reliability/many_circuits.cpp
// Resident memory of a large site: 63 nodes x 8 channels (504 circuits) each reporting every
// second, for `seconds`. Samples the daemon's VmRSS every second and prints it at the start,
// half time and end and its peak, against the target of 50 MB (reported, not asserted);
// every pack must be acknowledged and stored.
// Run on demand (tests/reliability/run.sh runs it):
//   many_circuits AMPLEDGER_BINARY [seconds, default 120]
#include <algorithm>
#include <atomic>
#include <chrono>
#include <cstdio>
#include <string>
#include <thread>
#include <vector>

#include "tests/reliability/served_site.h"

namespace ampledger::reliability {
namespace {

constexpr int kNodes = 63;
constexpr long kTargetKiB = 50 * 1000;  // 50 MB

int Main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: many_circuits AMPLEDGER_BINARY [seconds]\n");
    return 2;
  }
  const std::string binary = argv[1];
  const int seconds = argc > 2 ? std::stoi(argv[2]) : 120;

  ServedSite site(binary, kNodes);
  if (!site.Start()) {
    std::fprintf(stderr, "many_circuits: the daemon did not start:\n%s\n",
                 ReadText(site.log_path()).c_str());
    return 1;
  }
  const long rss_start = ResidentKiB(site.pid());
  // Live intervals: each node's pack n ends n seconds after the start.
  const UnixMs first_end_ms = WallClockMs() / 1000 * 1000;
  std::atomic<bool> running{true};
  std::vector<NodeTotals> totals(kNodes);
  std::vector<std::thread> nodes;
  for (int n = 0; n < kNodes; ++n) {
    nodes.emplace_back([&, n] {
      totals[n] = RunNode(n, site.udp_port(), first_end_ms, std::chrono::seconds(1), running);
    });
  }
  long rss_peak = rss_start;
  long rss_half = 0;
  for (int s = 0; s < seconds; ++s) {
    std::this_thread::sleep_for(std::chrono::seconds(1));
    const long rss = ResidentKiB(site.pid());
    rss_peak = std::max(rss_peak, rss);
    if (s == seconds / 2) rss_half = rss;
  }
  const long rss_end = ResidentKiB(site.pid());
  running.store(false);
  for (std::thread& node : nodes) node.join();
  const int exit_code = site.Stop();

  std::uint64_t packs = 0, acked = 0;
  for (const NodeTotals& t : totals) {
    packs += t.packs;
    acked += t.acked;
  }
  const std::int64_t stored =
      std::strtoll(QueryText(site.db_path(), "SELECT count(*) FROM reading").c_str(), nullptr, 10);
  // The memory target is a figure to report, not a pass/fail check (targets live in
  // benchmarks); what must hold is that nothing was lost.
  const bool ok = exit_code == 0 && acked == packs &&
                  stored == static_cast<std::int64_t>(acked * kChannels);

  std::printf("### Memory with %d circuits reporting every second (`many_circuits %s %d`)\n\n",
              kNodes * kChannels, binary.c_str(), seconds);
  std::printf("- resident memory: %ld KiB at start, %ld KiB at half time, %ld KiB at the end, "
              "%ld KiB peak (target under %ld KiB: %s)\n",
              rss_start, rss_half, rss_end, rss_peak, kTargetKiB,
              rss_peak < kTargetKiB ? "met" : "NOT met");
  std::printf("- %llu packs (%llu readings) acknowledged of %llu; stored readings %lld\n",
              static_cast<unsigned long long>(acked),
              static_cast<unsigned long long>(acked * kChannels),
              static_cast<unsigned long long>(packs), static_cast<long long>(stored));
  std::printf("- SIGTERM: exit %d\n- result: %s\n\n", exit_code, ok ? "PASS" : "FAIL");
  return ok ? 0 : 1;
}

}  // namespace
}  // namespace ampledger::reliability

int main(int argc, char** argv) { return ampledger::reliability::Main(argc, argv); }
