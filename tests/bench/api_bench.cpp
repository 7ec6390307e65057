// tests/bench/api_bench.cpp
// HTTP API throughput and latency with wrk (Debian package wrk) against a real daemon (an
// in-process Service on 127.0.0.1, a SQLite file in a temp folder) holding generated data:
// 16 circuits of 5-minute readings over `days` days. Each run measures, with keep-alive and
// the same connections and threads, a trivial route (/v1/ready, no token, no database read),
// /v1/live (token check and the newest reading of every channel) and a circuit series (a
// week of local hours from the rollups), and prints requests/s, latency percentiles and each
// route's rate as a fraction of the trivial one. Then /v1/live again while 50 clients
// long-poll /v1/events (each in a loop, honouring the 503 + Retry-After the server answers
// beyond its cap of waiters), and prints its rate with and without them. Never fails on speed.
// Run on demand:
//   api_bench [seconds per route, default 10] [connections, default 16] [days, default 60]
#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <future>
#include <regex>
#include <string>
#include <thread>
#include <vector>

#include "api/token.h"
#include "config/config.h"
#include "config/wall_clock.h"
#include "daemon/metering/local_time.h"
#include "daemon/service.h"
#include "storage/database.h"
#include "storage/reading_writer.h"
#include "storage/series.h"

namespace ampledger {
namespace {

constexpr int kChannels = 16;
constexpr UnixMs kReadingMs = 5 * 60 * 1000;

std::string ConfigToml(const std::string& db_path) {
  std::string toml = R"toml(
[site]
name = "Bench terrace"
time_zone = "Europe/Lisbon"
nominal_volts = [230]
currency = "EUR"

[[node]]
id = "board"
key = "5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed"
)toml";
  for (int c = 1; c <= kChannels; ++c) toml += "[[node.channel]]\nid = \"ct" + std::to_string(c) + "\"\n";
  for (int c = 1; c <= kChannels; ++c) {
    toml += "\n[[circuit]]\nid = \"c" + std::to_string(c) + "\"\nchannels = [\"board/ct" +
            std::to_string(c) + "\"]\n";
  }
  toml += "\n[storage]\npath = \"" + db_path + "\"\n"
          "\n[ingest]\nlisten = \"127.0.0.1:0\"\n"
          "\n[http]\nlisten = \"127.0.0.1:0\"\nthreads = 8\n\n[log]\nlevel = \"warn\"\n";
  return toml;
}

// Writes `days` of 5-minute readings for every channel, ending now, through the real writer.
bool Fill(const Config& config, int days) {
  auto db = Database::Open(config.storage);
  if (!db.ok()) return false;
  auto series = RegisterSeries(**db, config);
  if (!series.ok()) return false;
  auto writer = ReadingWriter::Start(config, db->get(), *series);
  if (!writer.ok()) return false;
  const UnixMs end = WallClockMs() / kReadingMs * kReadingMs;
  const UnixMs start = end - static_cast<UnixMs>(days) * 86400 * 1000;
  for (UnixMs batch_start = start; batch_start < end; batch_start += 86400 * 1000) {
    ReadingBatch batch;
    for (UnixMs t = batch_start + kReadingMs; t <= std::min(end, batch_start + 86400 * 1000);
         t += kReadingMs) {
      for (int c = 0; c < kChannels; ++c) {
        ChannelReading r;
        r.channel = c;
        r.end_ms = t;
        r.duration_ms = static_cast<std::int32_t>(kReadingMs);
        r.real_watts = 100.0 + 37.0 * c + 50.0 * ((t / kReadingMs + c) % 7);
        r.apparent_va = r.real_watts * 1.05;
        r.volts = 230;
        r.amps = r.apparent_va / 230;
        batch.readings.push_back(r);
      }
    }
    std::promise<Status> stored;
    (*writer)->Submit(std::move(batch), [&](const Status& s) { stored.set_value(s); });
    if (!stored.get_future().get().ok()) return false;
  }
  (*writer)->Stop();
  return true;
}

struct WrkFigures {
  double requests_per_second = 0;
  std::string latency;  // wrk's percentile lines
  std::string errors;   // non-2xx or socket errors, if wrk reported any
};

// Runs wrk and picks its figures from the text it prints (wrk 4: "Requests/sec:", the
// "Latency Distribution" block with --latency, "Non-2xx or 3xx responses:").
WrkFigures RunWrk(const std::string& url, const std::string& token, int seconds,
                  int connections) {
  std::string command = "wrk --latency -t2 -c" + std::to_string(connections) + " -d" +
                        std::to_string(seconds) + "s";
  if (!token.empty()) command += " -H 'Authorization: Bearer " + token + "'";
  command += " '" + url + "' 2>&1";
  WrkFigures figures;
  FILE* pipe = ::popen(command.c_str(), "r");
  if (pipe == nullptr) return figures;
  std::string output;
  char line[512];
  bool in_latency = false;
  while (std::fgets(line, sizeof line, pipe) != nullptr) {
    const std::string text = line;
    output += text;
    if (text.find("Latency Distribution") != std::string::npos) {
      in_latency = true;
      continue;
    }
    if (in_latency) {
      if (text.find('%') == std::string::npos) in_latency = false;
      else figures.latency += "   " + std::regex_replace(text, std::regex("^\\s+|\\s+$"), "") + ";";
    }
    std::smatch match;
    if (std::regex_search(text, match, std::regex("Requests/sec:\\s+([0-9.]+)"))) {
      figures.requests_per_second = std::stod(match[1]);
    }
    if (text.find("Non-2xx") != std::string::npos || text.find("Socket errors") != std::string::npos) {
      figures.errors += std::regex_replace(text, std::regex("^\\s+|\\s+$"), "") + " ";
    }
  }
  if (::pclose(pipe) != 0 || figures.requests_per_second == 0) {
    std::fprintf(stderr, "wrk failed:\n%s", output.c_str());
  }
  return figures;
}

// One HTTP/1.1 GET on a connection of its own (Connection: close): the status code, or 0
// when the connection failed. `retry_after` gets the Retry-After seconds of a 503.
int OneRequest(std::uint16_t port, const std::string& path, const std::string& token,
               int* retry_after) {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  if (fd < 0) return 0;
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_port = htons(port);
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  int status = 0;
  if (::connect(fd, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0) {
    const std::string request = "GET " + path + " HTTP/1.1\r\nHost: 127.0.0.1\r\n"
                                "Authorization: Bearer " + token + "\r\nConnection: close\r\n\r\n";
    if (::send(fd, request.data(), request.size(), MSG_NOSIGNAL) ==
        static_cast<ssize_t>(request.size())) {
      std::string response;
      char buffer[4096];
      ssize_t got;
      while ((got = ::recv(fd, buffer, sizeof buffer, 0)) > 0) response.append(buffer, got);
      std::smatch match;
      if (std::regex_search(response, match, std::regex("^HTTP/1.1 ([0-9]{3})"))) {
        status = std::stoi(match[1]);
      }
      if (std::regex_search(response, match, std::regex("Retry-After: ([0-9]+)"))) {
        *retry_after = std::stoi(match[1]);
      }
    }
  }
  ::close(fd);
  return status;
}

// Clients that long-poll /v1/events in a loop until stopped, as a script waiting for events
// would: a 200 after the wait (or an event) asks again; a 503 waits its Retry-After first.
class LongPollers {
 public:
  LongPollers(int count, std::uint16_t port, std::string token, int wait_seconds) {
    for (int k = 0; k < count; ++k) {
      threads_.emplace_back([this, port, token, wait_seconds] {
        const std::string path = "/v1/events?wait=" + std::to_string(wait_seconds);
        while (!stop_) {
          int retry_after = 1;
          const int status = OneRequest(port, path, token, &retry_after);
          (status == 200 ? answered_ : status == 503 ? refused_ : failed_)++;
          if (status == 200) continue;
          for (int slept = 0; slept < retry_after * 10 && !stop_; ++slept) {
            std::this_thread::sleep_for(std::chrono::milliseconds(100));
          }
        }
      });
    }
  }
  ~LongPollers() {
    stop_ = true;
    for (std::thread& thread : threads_) thread.join();
  }
  int answered() const { return answered_; }
  int refused() const { return refused_; }
  int failed() const { return failed_; }

 private:
  std::atomic<bool> stop_{false};
  std::atomic<int> answered_{0}, refused_{0}, failed_{0};
  std::vector<std::thread> threads_;
};

int Main(int argc, char** argv) {
  const int seconds = argc > 1 ? std::atoi(argv[1]) : 10;
  const int connections = argc > 2 ? std::atoi(argv[2]) : 16;
  const int days = argc > 3 ? std::atoi(argv[3]) : 60;
  const std::filesystem::path folder =
      std::filesystem::temp_directory_path() / ("ampledger-api-bench-" + std::to_string(::getpid()));
  std::filesystem::create_directories(folder);
  const std::string config_path = (folder / "bench.toml").string();
  Result<Config> config = ParseConfig(ConfigToml((folder / "bench.db").string()), config_path);
  if (!config.ok()) {
    std::fprintf(stderr, "%s\n", config.status().ToString().c_str());
    return 1;
  }
  std::printf("generating %d days of 5-minute readings for %d circuits...\n", days, kChannels);
  if (!Fill(*config, days)) {
    std::fprintf(stderr, "could not write the generated readings\n");
    return 1;
  }
  auto token_db = Database::Open(config->storage);
  Result<IssuedToken> token =
      IssueToken(**token_db, *ParseScope("viewer"), "bench", WallClockMs());
  if (!token.ok()) return 1;
  Service service(*config);
  if (Status started = service.Start(); !started.ok()) {
    std::fprintf(stderr, "%s\n", started.ToString().c_str());
    return 1;
  }
  // A week of local hours ending at the last local midnight.
  Result<LocalTime> zone = LocalTime::ForZone("Europe/Lisbon");
  const date::year_month_day today = zone->At(WallClockMs()).date;
  char range[96];
  const date::year_month_day week_ago{date::sys_days(today) - date::days(7)};
  std::snprintf(range, sizeof range, "from=%04d-%02u-%02u&to=%04d-%02u-%02u",
                static_cast<int>(week_ago.year()), static_cast<unsigned>(week_ago.month()),
                static_cast<unsigned>(week_ago.day()), static_cast<int>(today.year()),
                static_cast<unsigned>(today.month()), static_cast<unsigned>(today.day()));
  const std::string base = "http://127.0.0.1:" + std::to_string(service.http_port());
  struct Target {
    const char* label;
    std::string path;
    bool token;
  };
  const std::vector<Target> targets = {
      {"trivial /v1/ready", "/v1/ready", false},
      {"/v1/live (16 circuits)", "/v1/live", true},
      {"series, 1 week by hour", "/v1/circuits/c3/series?" + std::string(range) + "&step=hour", true},
  };
  std::printf("wrk --latency -t2 -c%d -d%ds, keep-alive, HTTP pool of 8 threads\n", connections,
              seconds);
  double trivial = 0;
  for (const Target& target : targets) {
    WrkFigures figures = RunWrk(base + target.path, target.token ? token->token : "", seconds,
                                connections);
    if (trivial == 0) trivial = figures.requests_per_second;
    std::printf("%-26s %10.0f requests/s  (%.2f of trivial)\n", target.label,
                figures.requests_per_second,
                trivial > 0 ? figures.requests_per_second / trivial : 0.0);
    std::printf("   latency:%s\n", figures.latency.c_str());
    if (!figures.errors.empty()) std::printf("   errors: %s\n", figures.errors.c_str());
  }
  // /v1/live alone, then with 50 long-poll clients; each run as long as the others.
  constexpr int kWaiters = 50;
  constexpr int kWaitSeconds = 5;  // shorter than a run, so each client asks several times
  const std::string live = base + "/v1/live";
  WrkFigures alone = RunWrk(live, token->token, seconds, connections);
  std::printf("\n/v1/live alone               %10.0f requests/s\n   latency:%s\n",
              alone.requests_per_second, alone.latency.c_str());
  {
    LongPollers waiters(kWaiters, service.http_port(), token->token, kWaitSeconds);
    std::this_thread::sleep_for(std::chrono::seconds(1));  // let them take their places
    WrkFigures beside = RunWrk(live, token->token, seconds, connections);
    std::printf("/v1/live, %d long-polls      %10.0f requests/s  (%.2f of alone)\n   latency:%s\n",
                kWaiters, beside.requests_per_second,
                alone.requests_per_second > 0
                    ? beside.requests_per_second / alone.requests_per_second
                    : 0.0,
                beside.latency.c_str());
    if (!beside.errors.empty()) std::printf("   errors: %s\n", beside.errors.c_str());
    std::printf("   long-polls so far: %d answered after their wait, %d refused with 503 + "
                "Retry-After (cap: half of the 8 HTTP threads), %d failed\n",
                waiters.answered(), waiters.refused(), waiters.failed());
  }
  service.RequestStop();
  Status stopped = service.Wait();
  std::filesystem::remove_all(folder);
  return stopped.ok() ? 0 : 1;
}

}  // namespace
}  // namespace ampledger

int main(int argc, char** argv) { return ampledger::Main(argc, argv); }
