// tests/reliability/soak.cpp
// Steady load for a long time. 125 nodes x 8 channels report every second (1,000 readings/s,
// live times, paced by the clock) while API clients ask for live values, a day of hourly
// series and the energy of every circuit over the run, and long-polls wait on /v1/events.
// Every 5 s it samples the daemon's resident memory, open file descriptors, WAL size and
// malloc's count of heap in use (from /metrics).
// After the warm-up (a sixth of the run, at least 3 minutes) it checks:
//   - resident memory grew less than 5%: the median of the samples in the run's last window
//     against the median of those in the first window after warm-up (each window as long as
//     the warm-up, or half of what follows it if shorter). Single samples would not do: with
//     heap in use flat, resident memory moves up and down by 2 MB over minutes as malloc
//     keeps and then trims what large answers freed (26.6 to 28.7 MB within 5 minutes,
//     tests/reliability/REPORT.md), so two single samples can differ by 8% with nothing
//     growing. A leak moves every sample of the last window, and so its median;
//   - no file-descriptor growth: the count at the end is at most the most seen by warm-up end;
//   - the WAL is bounded: its largest size in the second half of the run is no larger than
//     its largest in the first half (plus one checkpoint's worth, 4 MiB of pages);
//   - every pack was acknowledged, exactly its readings are stored, integrity_check is ok;
//   - every API request and long-poll was answered 200.
// Prints its figures (with API latency percentiles) as markdown; exits 0 only if every check
// holds. Run on demand (tests/reliability/run.sh runs it): soak AMPLEDGER_BINARY [minutes, 30]
#include <dirent.h>
#include <httplib.h>
#include <sys/stat.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "tests/reliability/served_site.h"

namespace ampledger::reliability {
namespace {

constexpr int kNodes = 125;  // x 8 channels, a reading each per second: 1,000 readings/s
constexpr auto kSampleEvery = std::chrono::seconds(5);

struct Sample {
  double minute = 0;
  long rss_kib = 0;
  int fds = 0;
  long long wal_bytes = 0;
  long heap_in_use_kib = -1;  // from /metrics; -1 if it could not be read
  long sqlite_kib = -1;       // of heap in use, SQLite's
};

// A gauge from the daemon's /metrics, in KiB; -1 if it could not be read.
long GaugeKiB(const std::string& metrics, const std::string& family) {
  const std::string name = "\n" + family + " ";
  const std::size_t at = metrics.find(name);
  return at == std::string::npos
             ? -1
             : std::strtol(metrics.c_str() + at + name.size(), nullptr, 10) / 1024;
}

// malloc's count of the daemon's heap in use (ampledger_heap_in_use_bytes): unlike resident
// memory it does not include what malloc keeps after frees, so it tells a leak from
// fragmentation. Of it, what SQLite holds (ampledger_sqlite_memory_bytes): page caches that
// fill as queries touch pages.
void ReadHeap(httplib::Client& api, Sample* sample) {
  auto answer = api.Get("/metrics");
  if (!answer || answer->status != 200) return;
  sample->heap_in_use_kib = GaugeKiB(answer->body, "ampledger_heap_in_use_bytes");
  sample->sqlite_kib = GaugeKiB(answer->body, "ampledger_sqlite_memory_bytes");
}

long Median(std::vector<long> values) {
  if (values.empty()) return 0;
  std::nth_element(values.begin(), values.begin() + values.size() / 2, values.end());
  return values[values.size() / 2];
}

// Percent from `from` to `to`; 0 when `from` is unknown (a sample that could not be read).
double Growth(long from, long to) {
  return from > 0 ? 100.0 * static_cast<double>(to - from) / static_cast<double>(from) : 0.0;
}

int OpenFiles(pid_t pid) {
  DIR* dir = ::opendir(("/proc/" + std::to_string(pid) + "/fd").c_str());
  if (dir == nullptr) return -1;
  int count = 0;
  while (const dirent* entry = ::readdir(dir)) count += entry->d_name[0] != '.';
  ::closedir(dir);
  return count;
}

long long FileBytes(const std::string& path) {
  struct stat info {};
  return ::stat(path.c_str(), &info) == 0 ? static_cast<long long>(info.st_size) : 0;
}

std::string UtcText(UnixMs ms) {
  const std::time_t seconds = static_cast<std::time_t>(ms / 1000);
  std::tm utc{};
  gmtime_r(&seconds, &utc);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

// Latencies (ms) of the API clients' requests, and how many failed.
struct Latencies {
  std::mutex mu;
  std::vector<double> ms;
  long failed = 0;
  void Add(double value, bool ok) {
    std::lock_guard lock(mu);
    ms.push_back(value);
    failed += !ok;
  }
};

double Percentile(std::vector<double> values, double p) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  return values[static_cast<std::size_t>(p * static_cast<double>(values.size() - 1))];
}

// One client asking for `paths(now)` in turn, one request every 250 ms, on one keep-alive
// connection.
void RunApiClient(int port, const std::string& token, UnixMs run_start_ms,
                  const std::atomic<bool>& running, Latencies* latencies) {
  httplib::Client api("127.0.0.1", port);
  api.set_bearer_token_auth(token);
  api.set_keep_alive(true);
  api.set_read_timeout(std::chrono::seconds(30));
  constexpr UnixMs kHourMs = 3'600'000, kQuarterMs = 900'000;
  const UnixMs run_start_quarter = run_start_ms / kQuarterMs * kQuarterMs;
  for (int i = 0; running.load(); ++i) {
    // The routes take times on their step's boundaries (whole hours; quarter hours).
    const UnixMs hour = WallClockMs() / kHourMs * kHourMs;
    const UnixMs quarter = std::max(WallClockMs() / kQuarterMs * kQuarterMs + kQuarterMs,
                                    run_start_quarter + kQuarterMs);
    const std::string paths[] = {
        "/v1/live",
        "/v1/circuits/load0-1/series?step=hour&from=" + UtcText(hour - 24 * kHourMs) +
            "&to=" + UtcText(hour + kHourMs),
        "/v1/energy?from=" + UtcText(run_start_quarter) + "&to=" + UtcText(quarter),
        "/v1/nodes",
    };
    const auto started = std::chrono::steady_clock::now();
    auto answer = api.Get(paths[i % 4]);
    latencies->Add(std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() -
                                                             started)
                       .count(),
                   answer && answer->status == 200);
    std::this_thread::sleep_for(std::chrono::milliseconds(250));
  }
}

// Long-polls /v1/events (20 s each) until stopped; counts the answers that were not 200.
void RunLongPoll(int port, const std::string& token, const std::atomic<bool>& running,
                 std::atomic<long>* polls, std::atomic<long>* failed) {
  httplib::Client api("127.0.0.1", port);
  api.set_bearer_token_auth(token);
  api.set_keep_alive(true);
  api.set_read_timeout(std::chrono::seconds(40));
  while (running.load()) {
    auto answer = api.Get("/v1/events?wait=20");
    ++*polls;
    if (!answer || answer->status != 200) {
      ++*failed;
      std::this_thread::sleep_for(std::chrono::seconds(1));
    }
  }
}

int Main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: soak AMPLEDGER_BINARY [minutes]\n");
    return 2;
  }
  const std::string binary = argv[1];
  const double minutes = argc > 2 ? std::stod(argv[2]) : 30;
  const auto run_time = std::chrono::duration<double, std::ratio<60>>(minutes);
  // SQLite's page caches and the WAL fill over the first 2.5 minutes at this rate (a 30-minute
  // run's samples); growth is measured from after that.
  const double warm_minutes = std::max(3.0, minutes / 6);
  if (minutes < warm_minutes + 1) {
    std::fprintf(stderr, "soak: run at least %g minutes (warm-up %g, then growth)\n",
                 warm_minutes + 1, warm_minutes);
    return 2;
  }

  ServedSite site(binary, kNodes);
  const std::string token = site.CreateToken("viewer");
  if (token.empty() || !site.Start()) {
    std::fprintf(stderr, "soak: the daemon did not start:\n%s\n", ReadText(site.log_path()).c_str());
    return 1;
  }
  const UnixMs run_start_ms = WallClockMs() / 1000 * 1000;
  std::atomic<bool> running{true};
  std::vector<NodeTotals> totals(kNodes);
  std::vector<std::thread> threads;
  for (int n = 0; n < kNodes; ++n) {
    threads.emplace_back([&, n] {
      totals[n] = RunNode(n, site.udp_port(), run_start_ms, std::chrono::seconds(1), running,
                          /*paced=*/true);
    });
  }
  std::atomic<bool> clients_running{true};
  Latencies latencies;
  std::atomic<long> polls{0}, polls_failed{0};
  std::vector<std::thread> clients;
  for (int c = 0; c < 2; ++c) {
    clients.emplace_back(RunApiClient, site.http_port(), token, run_start_ms,
                         std::cref(clients_running), &latencies);
    clients.emplace_back(RunLongPoll, site.http_port(), token, std::cref(clients_running), &polls,
                         &polls_failed);
  }

  httplib::Client metrics("127.0.0.1", site.http_port());
  metrics.set_bearer_token_auth(token);
  std::vector<Sample> samples;
  const auto started = std::chrono::steady_clock::now();
  for (;;) {
    const double minute = std::chrono::duration<double, std::ratio<60>>(
                              std::chrono::steady_clock::now() - started)
                              .count();
    Sample sample{minute, ResidentKiB(site.pid()), OpenFiles(site.pid()),
                  FileBytes(site.db_path() + "-wal")};
    ReadHeap(metrics, &sample);
    samples.push_back(sample);
    if (minute >= run_time.count()) break;
    std::this_thread::sleep_for(kSampleEvery);
  }
  clients_running.store(false);
  running.store(false);
  for (std::thread& thread : threads) thread.join();
  for (std::thread& client : clients) client.join();
  const int exit_code = site.Stop();

  std::uint64_t packs = 0, acked = 0;
  for (const NodeTotals& t : totals) {
    packs += t.packs;
    acked += t.acked;
  }
  const std::int64_t stored =
      std::strtoll(QueryText(site.db_path(), "SELECT count(*) FROM reading").c_str(), nullptr, 10);
  const std::string integrity = QueryText(site.db_path(), "PRAGMA integrity_check");

  // The sample at the end of warm-up, the windows after it and at the end, the peaks.
  std::size_t warm = 0;
  while (warm + 1 < samples.size() && samples[warm].minute < warm_minutes) ++warm;
  const Sample& at_warm = samples[warm];
  const Sample& at_end = samples.back();
  long rss_peak_after = 0, heap_peak_after = 0;
  int fds_max_warm = 0, fds_max_after = 0;
  long long wal_first_half = 0, wal_second_half = 0;
  for (std::size_t i = 0; i < samples.size(); ++i) {
    const Sample& s = samples[i];
    if (i <= warm) fds_max_warm = std::max(fds_max_warm, s.fds);
    if (i >= warm) {
      rss_peak_after = std::max(rss_peak_after, s.rss_kib);
      heap_peak_after = std::max(heap_peak_after, s.heap_in_use_kib);
      fds_max_after = std::max(fds_max_after, s.fds);
    }
    long long& wal = s.minute < minutes / 2 ? wal_first_half : wal_second_half;
    wal = std::max(wal, s.wal_bytes);
  }
  const double window_minutes = std::min(warm_minutes, (minutes - warm_minutes) / 2);
  std::vector<long> first_window, last_window;
  for (const Sample& s : samples) {
    if (s.minute >= at_warm.minute && s.minute < at_warm.minute + window_minutes) {
      first_window.push_back(s.rss_kib);
    }
    if (s.minute > at_end.minute - window_minutes) last_window.push_back(s.rss_kib);
  }
  const long rss_first = Median(first_window), rss_last = Median(last_window);
  const double rss_growth = Growth(rss_first, rss_last);
  const bool rss_ok = rss_growth < 5.0;
  const bool fds_ok = at_end.fds <= fds_max_warm;
  const bool wal_ok = wal_second_half <= wal_first_half + 4LL * 1024 * 1024;
  const bool stored_ok = acked == packs && stored == static_cast<std::int64_t>(acked * kChannels);
  const bool api_ok = !latencies.ms.empty() && latencies.failed == 0 && polls_failed.load() == 0;
  const bool ok = rss_ok && fds_ok && wal_ok && stored_ok && api_ok && exit_code == 0 &&
                  integrity == "ok";

  std::printf("### Soak (`soak %s %g`)\n\n", binary.c_str(), minutes);
  std::printf("- load: %d nodes x %d channels, a pack per node per second (1,000 readings/s) for "
              "%.1f minutes; 2 API clients (a request every 250 ms each: /v1/live, a day of "
              "hourly series, /v1/energy over the run, /v1/nodes); 2 long-polls of /v1/events "
              "(wait=20)\n",
              kNodes, kChannels, minutes);
  std::printf("- resident memory, medians of the 5-s samples: %ld KiB in the %.1f minutes after "
              "warm-up, %ld KiB in the last %.1f minutes: growth %.2f%% (limit 5%%): %s\n",
              rss_first, window_minutes, rss_last, window_minutes, rss_growth,
              rss_ok ? "ok" : "EXCEEDED");
  std::printf("- resident memory, single samples: %ld KiB at start, %ld KiB after warm-up (%.1f "
              "min), %ld KiB peak after it, %ld KiB at the end (%+.2f%%)\n",
              samples.front().rss_kib, at_warm.rss_kib, at_warm.minute, rss_peak_after,
              at_end.rss_kib, Growth(at_warm.rss_kib, at_end.rss_kib));
  std::printf("- heap in use (malloc's count, /metrics; a leak grows it, fragmentation does not): "
              "%ld KiB after warm-up, %ld KiB peak after it, %ld KiB at the end: growth %.2f%% "
              "(reported, not a limit); of it SQLite's %ld KiB after warm-up, %ld KiB at the end\n",
              at_warm.heap_in_use_kib, heap_peak_after, at_end.heap_in_use_kib,
              Growth(at_warm.heap_in_use_kib, at_end.heap_in_use_kib), at_warm.sqlite_kib,
              at_end.sqlite_kib);
  std::printf("- open files: %d at start, at most %d by warm-up end, at most %d after, %d at the "
              "end: %s\n",
              samples.front().fds, fds_max_warm, fds_max_after, at_end.fds,
              fds_ok ? "no growth" : "GREW");
  std::printf("- WAL: largest %.1f MiB in the first half, %.1f MiB in the second, %.1f MiB at the "
              "end: %s\n",
              wal_first_half / 1048576.0, wal_second_half / 1048576.0,
              at_end.wal_bytes / 1048576.0, wal_ok ? "bounded" : "GREW");
  std::printf("- API: %zu requests, %ld failed; latency p50 %.1f ms, p99 %.1f ms, max %.1f ms; "
              "long-polls: %ld, %ld failed\n",
              latencies.ms.size(), latencies.failed, Percentile(latencies.ms, 0.5),
              Percentile(latencies.ms, 0.99), Percentile(latencies.ms, 1.0), polls.load(),
              polls_failed.load());
  std::printf("- %llu packs (%llu readings) acknowledged of %llu; stored readings %lld; "
              "integrity_check: %s; SIGTERM: exit %d\n",
              static_cast<unsigned long long>(acked),
              static_cast<unsigned long long>(acked * kChannels),
              static_cast<unsigned long long>(packs), static_cast<long long>(stored),
              integrity.c_str(), exit_code);
  std::printf("- samples (minute: RSS KiB, heap in use KiB, SQLite's KiB, open files, WAL KiB):");
  const std::size_t stride = std::max<std::size_t>(1, samples.size() / 12);
  for (std::size_t i = 0; i < samples.size(); i += stride) {
    std::printf(" %.1f: %ld, %ld, %ld, %d, %lld;", samples[i].minute, samples[i].rss_kib,
                samples[i].heap_in_use_kib, samples[i].sqlite_kib, samples[i].fds,
                samples[i].wal_bytes / 1024);
  }
  std::printf("\n- result: %s\n\n", ok ? "PASS" : "FAIL");
  if (!ok) std::fprintf(stderr, "serve log:\n%s\n", ReadText(site.log_path()).c_str());
  return ok ? 0 : 1;
}

}  // namespace
}  // namespace ampledger::reliability

int main(int argc, char** argv) { return ampledger::reliability::Main(argc, argv); }
