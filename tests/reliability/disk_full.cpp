// tests/reliability/disk_full.cpp
// A full disk. The database lives on a size-limited tmpfs this tool mounts (root, or
// CAP_SYS_ADMIN, is needed; without it the tool says so and exits 77, skipped). A node sends a
// pack every 2 ms until the filesystem is full: the daemon must stop acknowledging, say so in
// its log and in /v1/health's "writer", and corrupt nothing. Then the filesystem is enlarged
// (space returns): the daemon must resume without a restart and the node's resent packs fill
// the gap. Finally: every pack acknowledged and stored exactly once, PRAGMA integrity_check
// ok, rollups equal to a recomputation from raw readings.
// Run on demand (tests/reliability/run.sh runs it):
//   disk_full AMPLEDGER_BINARY [tmpfs size in MiB, default 6]
#include <httplib.h>
#include <sys/mount.h>

#include <atomic>
#include <cerrno>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>
#include <thread>

#include "config/config.h"
#include "tests/reliability/rollup_check.h"
#include "tests/reliability/served_site.h"

namespace ampledger::reliability {
namespace {

constexpr int kSkipped = 77;

// /v1/health's "writer" check: "ok", or why it fails (details need a whole-site token); ""
// if the daemon did not answer.
std::string WriterHealth(int http_port, const std::string& token) {
  httplib::Client api("127.0.0.1", http_port);
  api.set_bearer_token_auth(token);
  auto answer = api.Get("/v1/health");
  if (!answer) return "";
  nlohmann::json body = nlohmann::json::parse(answer->body, nullptr, false);
  if (!body.is_object() || !body["checks"].is_array()) return "";
  for (const nlohmann::json& check : body["checks"]) {
    if (check.value("name", "") != "writer") continue;
    if (check.value("status", "") == "pass") return "ok";
    return check.value("detail", std::string("fail"));
  }
  return "";
}

int Main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: disk_full AMPLEDGER_BINARY [tmpfs MiB]\n");
    return 2;
  }
  const std::string binary = argv[1];
  const int mib = argc > 2 ? std::stoi(argv[2]) : 6;

  ServedSite site(binary, 1, "data/site.db");
  const std::string data = site.File("data");
  std::filesystem::create_directory(data);
  const std::string size = "size=" + std::to_string(mib) + "m";
  if (::mount("tmpfs", data.c_str(), "tmpfs", 0, size.c_str()) != 0) {
    std::printf("### Disk full (`disk_full %s %d`)\n\n- skipped: cannot mount a tmpfs here (%s); "
                "run as root\n\n",
                binary.c_str(), mib, std::strerror(errno));
    return kSkipped;
  }
  struct Unmount {
    std::string path;
    ~Unmount() { ::umount2(path.c_str(), MNT_DETACH); }
  } unmount{data};

  // A tmpfs this small is below the free-space threshold: /v1/health's disk check fails from
  // the start; its writer check is what changes.
  const std::string token = site.CreateToken("viewer");
  if (token.empty() || !site.Start()) {
    std::fprintf(stderr, "disk_full: the daemon did not start:\n%s\n",
                 ReadText(site.log_path()).c_str());
    return 1;
  }
  std::atomic<bool> running{true};
  const UnixMs first_end_ms = (WallClockMs() - 6 * 86'400'000LL) / 1000 * 1000;
  NodeTotals node;
  std::thread sender([&] {
    node = RunNode(0, site.udp_port(), first_end_ms, std::chrono::milliseconds(2), running);
  });

  // Wait for the writer to report the full disk (at most 120 s).
  std::string full_health;
  const auto started = std::chrono::steady_clock::now();
  while (std::chrono::steady_clock::now() - started < std::chrono::seconds(120)) {
    full_health = WriterHealth(site.http_port(), token);
    if (!full_health.empty() && full_health != "ok") break;
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
  }
  const double seconds_to_full =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  const bool saw_full = !full_health.empty() && full_health != "ok";
  // Stay full for a while: the node keeps its unacknowledged packs and resends them.
  std::this_thread::sleep_for(std::chrono::seconds(3));
  const std::string integrity_while_full = QueryText(site.db_path(), "PRAGMA quick_check");

  const std::string bigger = "size=" + std::to_string(mib * 16) + "m";
  const bool enlarged =
      ::mount("tmpfs", data.c_str(), "tmpfs", MS_REMOUNT, bigger.c_str()) == 0;
  std::string resumed_health;
  const auto enlarged_at = std::chrono::steady_clock::now();
  while (enlarged && std::chrono::steady_clock::now() - enlarged_at < std::chrono::seconds(60)) {
    resumed_health = WriterHealth(site.http_port(), token);
    if (resumed_health == "ok") break;
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
  }
  const double seconds_to_resume =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - enlarged_at).count();
  std::this_thread::sleep_for(std::chrono::seconds(2));
  running.store(false);
  sender.join();
  const int exit_code = site.Stop();

  const std::string log = ReadText(site.log_path());
  const bool logged = log.find("full") != std::string::npos;
  const std::int64_t stored =
      std::strtoll(QueryText(site.db_path(), "SELECT count(*) FROM reading").c_str(), nullptr, 10);
  const std::uint64_t expected = node.acked * kChannels;
  const std::string integrity = QueryText(site.db_path(), "PRAGMA integrity_check");
  Result<Config> config = LoadConfig(site.config_path());
  RollupCheck rollups = config.ok() ? CompareRollups(*config, first_end_ms - 86'400'000,
                                                     WallClockMs() + 86'400'000)
                                    : RollupCheck{0, 1};
  RollupCheck days = config.ok() ? CompareDailyRollups(*config, first_end_ms - 86'400'000,
                                                       WallClockMs() + 86'400'000)
                                 : RollupCheck{0, 1};
  const bool ok = saw_full && logged && integrity_while_full == "ok" && enlarged &&
                  resumed_health == "ok" && node.drained && node.acked == node.packs &&
                  stored == static_cast<std::int64_t>(expected) && integrity == "ok" &&
                  rollups.mismatches == 0 && rollups.buckets > 0 && days.mismatches == 0 &&
                  days.buckets > 0 && exit_code == 0;

  std::printf("### Disk full (`disk_full %s %d`)\n\n", binary.c_str(), mib);
  std::printf("- database on a %d MiB tmpfs; one node, a pack of %d channels every 2 ms\n", mib,
              kChannels);
  std::printf("- full after %.1f s; /v1/health writer: \"%s\"; logged: %s; quick_check while "
              "full: %s\n",
              seconds_to_full, full_health.c_str(), logged ? "yes" : "NO",
              integrity_while_full.c_str());
  std::printf("- tmpfs enlarged to %d MiB: writer \"%s\" again after %.1f s, without a restart\n",
              mib * 16, resumed_health.c_str(), seconds_to_resume);
  std::printf("- packs %llu, acknowledged %llu; readings expected %llu, stored %lld: %s\n",
              static_cast<unsigned long long>(node.packs),
              static_cast<unsigned long long>(node.acked), static_cast<unsigned long long>(expected),
              static_cast<long long>(stored),
              stored == static_cast<std::int64_t>(expected) ? "the gap filled by resends"
                                                            : "MISMATCH");
  std::printf("- PRAGMA integrity_check: %s; rollups vs recomputation: %d buckets, %d "
              "mismatches; daily rollups: %d circuit-days, %d mismatches; SIGTERM: exit %d\n",
              integrity.c_str(), rollups.buckets, rollups.mismatches, days.buckets,
              days.mismatches, exit_code);
  std::printf("- result: %s\n\n", ok ? "PASS" : "FAIL");
  if (!ok) std::fprintf(stderr, "serve log:\n%s\n", log.c_str());
  return ok ? 0 : 1;
}

}  // namespace
}  // namespace ampledger::reliability

int main(int argc, char** argv) { return ampledger::reliability::Main(argc, argv); }
