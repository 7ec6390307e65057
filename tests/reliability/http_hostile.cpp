// tests/reliability/http_hostile.cpp
// Hostile HTTP clients. `ampledger serve` (8 HTTP worker threads, the default) faces, one
// phase after another, each for `seconds`:
//   quiet            nothing hostile (the baseline);
//   oversize header  4 clients sending a 64 KiB header line, again and again;
//   oversize body    4 clients announcing a 100 MB body and sending it;
//   chunked upload   4 clients sending a chunked body, a chunk every 100 ms;
//   slowloris        32 connections each sending its request header a byte a second;
//   idle keep-alive  64 connections that make one request and then sit idle, reconnecting
//                    when the server closes them;
// while one well-behaved client asks for /v1/live every 200 ms on a keep-alive connection
// (timeout 30 s). Per phase it prints the well-behaved client's answers, failures and latency
// (p50, p99, max) and what the hostile clients got back. The API keeps answering within its
// limits when every well-behaved request in every phase is answered 200 within 10 s (twice
// the server's 5 s read and keep-alive timeouts, the longest a worker may be held by one
// idle or slow connection); the daemon must also be healthy afterwards and stop cleanly.
// Exits 0 only if that holds. Run on demand (tests/reliability/run.sh runs it):
//   http_hostile AMPLEDGER_BINARY [seconds per phase, default 20]
#include <arpa/inet.h>
#include <httplib.h>
#include <netinet/in.h>
#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cstdio>
#include <functional>
#include <map>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "tests/reliability/served_site.h"

namespace ampledger::reliability {
namespace {

constexpr double kLimitMs = 10'000;

int Connect(int port) {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in to{};
  to.sin_family = AF_INET;
  to.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  to.sin_port = htons(static_cast<std::uint16_t>(port));
  if (::connect(fd, reinterpret_cast<sockaddr*>(&to), sizeof to) != 0) {
    ::close(fd);
    return -1;
  }
  return fd;
}

bool SendAll(int fd, const std::string& bytes) {
  std::size_t sent = 0;
  while (sent < bytes.size()) {
    const ssize_t n = ::send(fd, bytes.data() + sent, bytes.size() - sent, MSG_NOSIGNAL);
    if (n <= 0) return false;
    sent += static_cast<std::size_t>(n);
  }
  return true;
}

// What the server sent back within `wait_ms`: "HTTP 413", "closed" (nothing, connection
// closed) or "no answer".
std::string Answer(int fd, int wait_ms) {
  pollfd p{fd, POLLIN, 0};
  if (::poll(&p, 1, wait_ms) <= 0) return "no answer";
  char buffer[256];
  const ssize_t n = ::recv(fd, buffer, sizeof buffer - 1, 0);
  if (n <= 0) return "closed";
  buffer[n] = '\0';
  const std::string text(buffer);
  return text.rfind("HTTP/1.1 ", 0) == 0 ? "HTTP " + text.substr(9, 3) : "other";
}

// Counts of what hostile clients got back, by answer.
struct Outcomes {
  std::mutex mu;
  std::map<std::string, long> counts;
  void Add(const std::string& answer) {
    std::lock_guard lock(mu);
    ++counts[answer];
  }
  std::string Text() {
    std::lock_guard lock(mu);
    std::string text;
    for (const auto& [answer, count] : counts) {
      text += (text.empty() ? "" : ", ") + std::to_string(count) + " x " + answer;
    }
    return text.empty() ? "-" : text;
  }
};

// One attempt of a hostile client: connect, misbehave, note the answer, close.
using Attempt = std::function<void(int port, const std::atomic<bool>& running, Outcomes*)>;

void OversizeHeader(int port, const std::atomic<bool>&, Outcomes* out) {
  const int fd = Connect(port);
  if (fd < 0) return out->Add("connect failed");
  const bool sent = SendAll(fd, "GET /v1/health HTTP/1.1\r\nHost: a\r\nX-Padding: " +
                                    std::string(64 * 1024, 'a') + "\r\n\r\n");
  out->Add(sent ? Answer(fd, 10'000) : "closed while sending");
  ::close(fd);
}

void OversizeBody(int port, const std::atomic<bool>& running, Outcomes* out) {
  const int fd = Connect(port);
  if (fd < 0) return out->Add("connect failed");
  bool sent = SendAll(fd, "POST /v1/alerts/a/circuit/b/acknowledge HTTP/1.1\r\nHost: a\r\n"
                          "Content-Type: application/json\r\nContent-Length: 100000000\r\n\r\n");
  const std::string chunk(16 * 1024, '{');
  for (int i = 0; sent && i < 64 && running.load(); ++i) sent = SendAll(fd, chunk);
  out->Add(Answer(fd, 10'000));
  ::close(fd);
}

void ChunkedUpload(int port, const std::atomic<bool>& running, Outcomes* out) {
  const int fd = Connect(port);
  if (fd < 0) return out->Add("connect failed");
  bool sent = SendAll(fd, "POST /v1/alerts/a/circuit/b/acknowledge HTTP/1.1\r\nHost: a\r\n"
                          "Content-Type: application/json\r\nTransfer-Encoding: chunked\r\n\r\n");
  for (int i = 0; sent && i < 20 && running.load(); ++i) {
    sent = SendAll(fd, "400\r\n" + std::string(0x400, ' ') + "\r\n");
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
  }
  out->Add(Answer(fd, 10'000));
  ::close(fd);
}

// A request header a byte a second, for as long as the server keeps the connection.
void Slowloris(int port, const std::atomic<bool>& running, Outcomes* out) {
  const int fd = Connect(port);
  if (fd < 0) return out->Add("connect failed");
  const std::string header = "GET /v1/health HTTP/1.1\r\nHost: a\r\nX-Slow: " +
                             std::string(4096, 'z');
  std::size_t at = 0;
  std::string answer = "held to the phase's end";
  while (running.load() && at < header.size()) {
    if (!SendAll(fd, header.substr(at++, 1))) {
      answer = "closed by the server";
      break;
    }
    pollfd p{fd, POLLIN, 0};
    if (::poll(&p, 1, 1000) > 0) {
      const std::string got = Answer(fd, 0);
      answer = got == "closed" ? "closed by the server" : got;
      break;
    }
  }
  out->Add(answer);
  ::close(fd);
}

// One complete request with keep-alive, then idle until the server closes or the phase ends.
void IdleKeepAlive(int port, const std::atomic<bool>& running, Outcomes* out) {
  const int fd = Connect(port);
  if (fd < 0) return out->Add("connect failed");
  if (!SendAll(fd, "GET /v1/health HTTP/1.1\r\nHost: a\r\nConnection: keep-alive\r\n\r\n")) {
    ::close(fd);
    return out->Add("closed while sending");
  }
  const std::string answer = Answer(fd, 30'000);
  std::string idle = "held to the phase's end";
  char buffer[4096];
  while (running.load()) {
    pollfd p{fd, POLLIN, 0};
    if (::poll(&p, 1, 200) > 0 && ::recv(fd, buffer, sizeof buffer, 0) <= 0) {
      idle = "then closed by the server";
      break;
    }
  }
  out->Add(answer + ", " + idle);
  ::close(fd);
}

struct Phase {
  const char* name;
  int clients;
  Attempt attempt;
};

struct PhaseResult {
  std::vector<double> latency_ms;
  long failed = 0;
  std::string hostile;
};

double Percentile(std::vector<double> values, double p) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  return values[static_cast<std::size_t>(p * static_cast<double>(values.size() - 1))];
}

PhaseResult RunPhase(const Phase& phase, int port, const std::string& token, int seconds) {
  std::atomic<bool> running{true};
  Outcomes outcomes;
  std::vector<std::thread> hostile;
  for (int c = 0; c < phase.clients; ++c) {
    hostile.emplace_back([&] {
      while (running.load()) phase.attempt(port, running, &outcomes);
    });
  }
  std::this_thread::sleep_for(std::chrono::milliseconds(500));  // let them take hold
  PhaseResult result;
  httplib::Client good("127.0.0.1", port);
  good.set_bearer_token_auth(token);
  good.set_keep_alive(true);
  good.set_connection_timeout(std::chrono::seconds(30));
  good.set_read_timeout(std::chrono::seconds(30));
  const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(seconds);
  while (std::chrono::steady_clock::now() < until) {
    const auto started = std::chrono::steady_clock::now();
    auto answer = good.Get("/v1/live");
    const double ms =
        std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - started)
            .count();
    result.latency_ms.push_back(ms);
    if (!answer || answer->status != 200 || ms > kLimitMs) ++result.failed;
    std::this_thread::sleep_for(std::chrono::milliseconds(200));
  }
  running.store(false);
  for (std::thread& t : hostile) t.join();
  result.hostile = outcomes.Text();
  return result;
}

int Main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: http_hostile AMPLEDGER_BINARY [seconds per phase]\n");
    return 2;
  }
  const std::string binary = argv[1];
  const int seconds = argc > 2 ? std::stoi(argv[2]) : 20;

  ServedSite site(binary, 1);
  const std::string token = site.CreateToken("viewer");
  if (token.empty() || !site.Start()) {
    std::fprintf(stderr, "http_hostile: the daemon did not start:\n%s\n",
                 ReadText(site.log_path()).c_str());
    return 1;
  }
  const Phase phases[] = {
      {"quiet", 0, nullptr},
      {"oversize header (64 KiB line)", 4, OversizeHeader},
      {"oversize body (100 MB announced)", 4, OversizeBody},
      {"chunked upload", 4, ChunkedUpload},
      {"slowloris (32 connections)", 32, Slowloris},
      {"idle keep-alive (64 connections)", 64, IdleKeepAlive},
  };
  std::printf("### Hostile HTTP clients (`http_hostile %s %d`)\n\n", binary.c_str(), seconds);
  std::printf("Well-behaved client: GET /v1/live every 200 ms; limit: answered 200 within "
              "%.0f s.\n\n",
              kLimitMs / 1000);
  std::printf("| phase | well-behaved requests | failed or over the limit | p50 ms | p99 ms | "
              "max ms | hostile clients got |\n|---|---|---|---|---|---|---|\n");
  bool ok = true;
  for (const Phase& phase : phases) {
    PhaseResult r = RunPhase(phase, site.http_port(), token, seconds);
    ok = ok && r.failed == 0 && !r.latency_ms.empty();
    std::printf("| %s | %zu | %ld | %.1f | %.1f | %.1f | %s |\n", phase.name, r.latency_ms.size(),
                r.failed, Percentile(r.latency_ms, 0.5), Percentile(r.latency_ms, 0.99),
                Percentile(r.latency_ms, 1.0), r.hostile.c_str());
    std::fflush(stdout);
  }
  const bool healthy = testing::WaitHealthy(site.http_port(), std::chrono::seconds(10));
  const int exit_code = site.Stop();
  ok = ok && healthy && exit_code == 0;
  std::printf("\n- healthy afterwards: %s; SIGTERM: exit %d\n- result: %s\n\n",
              healthy ? "yes" : "NO", exit_code, ok ? "PASS" : "FAIL");
  if (!ok) std::fprintf(stderr, "serve log:\n%s\n", ReadText(site.log_path()).c_str());
  return ok ? 0 : 1;
}

}  // namespace
}  // namespace ampledger::reliability

int main(int argc, char** argv) { return ampledger::reliability::Main(argc, argv); }
