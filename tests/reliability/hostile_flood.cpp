// tests/reliability/hostile_flood.cpp
// Hostile input at full rate. While one real node sends a pack every 5 ms (and resends what is
// unacknowledged), a flooder on 127.0.0.1 sends `count` datagrams as fast as the socket takes
// them, in turn: random garbage, packs forged under a wrong key, authentic packs replayed
// from an old boot, and oversize datagrams. Afterwards: the daemon is up and healthy, its
// resident memory stayed bounded (sampled every 100 ms), every pack of the real node was
// acknowledged and exactly its readings are stored, and the refusals are counted by reason.
// Prints its figures as markdown; exits 0 only if every check holds.
// Run on demand (tests/reliability/run.sh runs it):
//   hostile_flood AMPLEDGER_BINARY [datagrams, default 1000000]
#include <httplib.h>
#include <netinet/in.h>
#include <signal.h>
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <chrono>
#include <cstdio>
#include <nlohmann/json.hpp>
#include <random>
#include <string>
#include <thread>
#include <vector>

#include "daemon/ingest/pack_encoder.h"
#include "tests/reliability/served_site.h"

namespace ampledger::reliability {
namespace {

// One of each kind the flooder sends, in turn.
std::vector<std::string> HostileDatagrams(UnixMs now, std::mt19937& random) {
  NodePack pack{NodeId(0), 0, 1, 1000, {}};
  ChannelSample& s = pack.samples.emplace_back();
  s.channel = "ct1";
  s.end_ms = now - 60'000;
  s.duration_ms = 1000;
  s.real_watts = 99999;
  const PackEncoding cose{PackFormat::kCoseMac0, MacAlgorithm::kHmac256_64, true, std::nullopt};
  std::vector<std::string> out;
  std::uniform_int_distribution<int> byte(0, 255);
  for (int i = 0; i < 64; ++i) {  // garbage of every length up to 600 bytes
    std::string junk(1 + (i * 37) % 600, '\0');
    for (char& c : junk) c = static_cast<char>(byte(random));
    out.push_back(junk);
  }
  pack.boot = 7;  // forged: a plausible pack under a key that is not the node's
  out.push_back(EncodePack(pack, cose, std::string(32, 'F')));
  pack.boot = 0;  // replayed: authentic, but from a boot older than the node's current one
  out.push_back(EncodePack(pack, cose, NodeKey()));
  out.push_back(std::string(2000, 'x'));  // oversize: longer than max_datagram_bytes (1400)
  return out;
}

int Main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: hostile_flood AMPLEDGER_BINARY [datagrams]\n");
    return 2;
  }
  const std::string binary = argv[1];
  const long count = argc > 2 ? std::stol(argv[2]) : 1'000'000;

  ServedSite site(binary, 1);
  const std::string token = site.CreateToken("viewer");
  if (token.empty() || !site.Start()) {
    std::fprintf(stderr, "hostile_flood: the daemon did not start:\n%s\n",
                 ReadText(site.log_path()).c_str());
    return 1;
  }

  std::atomic<bool> running{true};
  const UnixMs first_end_ms = (WallClockMs() - 6 * 86'400'000LL) / 1000 * 1000;
  NodeTotals node;
  std::thread real_node([&] {
    node = RunNode(0, site.udp_port(), first_end_ms, std::chrono::milliseconds(5), running);
  });
  // The node's first pack makes boot 1 current, so the flood's boot-0 packs are replays.
  std::this_thread::sleep_for(std::chrono::milliseconds(500));

  const long rss_start = ResidentKiB(site.pid());
  std::atomic<long> rss_peak{rss_start};
  std::atomic<bool> sampling{true};
  std::thread sampler([&] {
    while (sampling.load()) {
      rss_peak.store(std::max(rss_peak.load(), ResidentKiB(site.pid())));
      std::this_thread::sleep_for(std::chrono::milliseconds(100));
    }
  });

  std::mt19937 random(11);
  const std::vector<std::string> kinds = HostileDatagrams(WallClockMs(), random);
  int flood = ::socket(AF_INET, SOCK_DGRAM, 0);
  sockaddr_in to{};
  to.sin_family = AF_INET;
  to.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  to.sin_port = htons(static_cast<std::uint16_t>(site.udp_port()));
  const auto flood_started = std::chrono::steady_clock::now();
  long sent = 0;
  for (long i = 0; i < count; ++i) {
    const std::string& bytes = kinds[static_cast<std::size_t>(i) % kinds.size()];
    while (::sendto(flood, bytes.data(), bytes.size(), 0, reinterpret_cast<sockaddr*>(&to),
                    sizeof to) < 0) {
      if (errno != EAGAIN && errno != ENOBUFS) break;
    }
    ++sent;
  }
  const double flood_seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - flood_started).count();
  ::close(flood);
  std::this_thread::sleep_for(std::chrono::seconds(1));  // let the daemon drain its queue
  running.store(false);
  real_node.join();
  sampling.store(false);
  sampler.join();
  const long rss_end = ResidentKiB(site.pid());

  httplib::Client api("127.0.0.1", site.http_port());
  api.set_bearer_token_auth(token);
  auto health = api.Get("/v1/health");
  auto nodes = api.Get("/v1/nodes");
  const bool healthy = health && health->status == 200;
  nlohmann::json datagrams;
  if (nodes && nodes->status == 200) {
    datagrams = nlohmann::json::parse(nodes->body, nullptr, false).value("datagrams", nlohmann::json());
  }
  const int exit_code = site.Stop();

  const std::int64_t stored =
      std::strtoll(QueryText(site.db_path(), "SELECT count(*) FROM reading").c_str(), nullptr, 10);
  const std::uint64_t expected = node.acked * kChannels;
  // "Bounded": the flood may grow the heap by its receive batch and log buffers, not by the
  // number of datagrams. 64 MiB over the start is far above the first and far below the second.
  const long rss_limit_kib = rss_start + 64 * 1024;
  const bool ok = healthy && exit_code == 0 && node.drained && node.acked == node.packs &&
                  stored == static_cast<std::int64_t>(expected) && rss_peak.load() <= rss_limit_kib;

  std::printf("### Hostile input at full rate (`hostile_flood %s %ld`)\n\n", binary.c_str(), count);
  std::printf("- flood: %ld datagrams in %.1f s (%.0f/s) from one socket: garbage (64 lengths up "
              "to 600 bytes), forged (wrong key), replayed (authentic, old boot), oversize "
              "(2000 bytes), in turn\n",
              sent, flood_seconds, sent / flood_seconds);
  std::printf("- daemon counters: %s\n", datagrams.is_null() ? "(not read)" : datagrams.dump().c_str());
  std::printf("- resident memory: %ld KiB at start, %ld KiB peak, %ld KiB at the end (limit %ld)\n",
              rss_start, rss_peak.load(), rss_end, rss_limit_kib);
  std::printf("- real node (a pack every 5 ms): %llu packs, %llu acknowledged; readings expected "
              "%llu, stored %lld: %s\n",
              static_cast<unsigned long long>(node.packs),
              static_cast<unsigned long long>(node.acked), static_cast<unsigned long long>(expected),
              static_cast<long long>(stored),
              stored == static_cast<std::int64_t>(expected) ? "all stored, nothing else" : "MISMATCH");
  std::printf("- health after the flood: %s; SIGTERM: exit %d\n", healthy ? "200" : "NOT healthy",
              exit_code);
  std::printf("- result: %s\n\n", ok ? "PASS" : "FAIL");
  if (!ok) std::fprintf(stderr, "serve log:\n%s\n", ReadText(site.log_path()).c_str());
  return ok ? 0 : 1;
}

}  // namespace
}  // namespace ampledger::reliability

int main(int argc, char** argv) { return ampledger::reliability::Main(argc, argv); }
